// A recipe: everything that decides how a scan becomes an image. The CLI builds one from its
// options, the page from its form; both run it with runRecipe (run.ts). Plain JSON, so it can
// be stored with the result and shown in reports.
import { InputError } from '../errors';
import { FILTER_WINDOWS, MAX_BAND_LIMIT, type FilterWindow } from '../recon/filter-design';
import { RECIPE_EXTENDS, type RecipeExtend } from '../truncation/extend-methods';
import { checkReduction, isIdentity, type Reduction } from '../reduction';
import { ITERATIVE_METHODS, validateIterativeFields, type IterativeFields } from '../iterative/options';
import { validateKnowledge, type Knowledge } from '../knowledge';

/** Reconstruction methods available in this build (dbp: differentiated backprojection, web/core/dbp). */
export const METHODS = ['fbp', ...ITERATIVE_METHODS, 'dbp'] as const;
export type Method = (typeof METHODS)[number];

export interface GridChoice {
  /** Pixels along x and y. */
  size: number;
  /** Pixel size, mm. */
  pixel: number;
}

/** The iterative methods' fields (iterations, subsets, prior, ...) are in iterative/options.ts. */
export interface Recipe extends IterativeFields {
  method: Method;
  /** Reconstruction grid; absent: chosen from the scan (grid.ts). */
  grid?: GridChoice;
  /** Window of the ramp filter (FILTER_WINDOWS, sharpest first). */
  filter: FilterWindow;
  /** Where the filter window ends: line pairs per cm at the isocentre; absent: the full band (Nyquist). */
  bandLimit?: number;
  /** Detector extension before filtering (truncation correction); absent means 'none'. 'outline' needs knowledge.outline. */
  extend?: RecipeExtend;
  /** Slices of a cone-beam volume; absent: chosen from the scan (volume-grid.ts). */
  volume?: SliceChoice;
  /** What the user knows beyond the data (known regions, outline); absent: nothing. */
  knowledge?: Knowledge;
  /** Detector binning, a view step and a row range applied to the scan before this run (reduction.ts). */
  reduce?: Reduction;
}

export interface SliceChoice {
  /** Slices along z. */
  slices: number;
  /** Slice spacing, mm. */
  spacing: number;
}

export const DEFAULT_RECIPE: Recipe = { method: 'fbp', filter: 'ramp', extend: 'none' };

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** Checks a recipe from JSON (page form, stored record, CLI) and fills defaults. */
export function validateRecipe(input: unknown): Recipe {
  if (!isObject(input)) throw new InputError('recipe: expected an object');
  const r = { ...DEFAULT_RECIPE, ...input } as Record<string, unknown>;
  if (!(METHODS as readonly string[]).includes(r.method as string)) {
    throw new InputError(`recipe method: got "${r.method}", expected one of ${METHODS.join(', ')}`);
  }
  if (!(FILTER_WINDOWS as readonly string[]).includes(r.filter as string)) {
    throw new InputError(`recipe filter: got "${r.filter}", expected one of ${FILTER_WINDOWS.join(', ')}`);
  }
  const out: Recipe = { method: r.method as Method, filter: r.filter as FilterWindow };
  if (r.bandLimit !== undefined) {
    if (typeof r.bandLimit !== 'number' || !(r.bandLimit > 0 && r.bandLimit <= MAX_BAND_LIMIT)) {
      throw new InputError(`recipe bandLimit: got ${JSON.stringify(r.bandLimit)}, expected line pairs per cm at the isocentre, above 0 and at most ${MAX_BAND_LIMIT}`);
    }
    out.bandLimit = r.bandLimit;
  }
  if (r.extend !== undefined) {
    if (!(RECIPE_EXTENDS as readonly string[]).includes(r.extend as string)) {
      throw new InputError(`recipe extend: got "${r.extend}", expected one of ${RECIPE_EXTENDS.join(', ')}`);
    }
    out.extend = r.extend as RecipeExtend;
  }
  if (r.grid !== undefined) {
    const g = r.grid;
    if (!isObject(g)) throw new InputError('recipe grid: expected {size, pixel}');
    if (!Number.isInteger(g.size) || (g.size as number) < 8 || (g.size as number) > 4096) throw new InputError(`recipe grid.size: got ${g.size}, expected a whole number from 8 to 4096`);
    if (typeof g.pixel !== 'number' || !(g.pixel > 0) || g.pixel > 100) throw new InputError(`recipe grid.pixel: got ${g.pixel}, expected a pixel size in mm (0 to 100)`);
    out.grid = { size: g.size as number, pixel: g.pixel };
  }
  if (r.volume !== undefined) out.volume = validateSliceChoice(r.volume);
  if (r.reduce !== undefined) {
    const reduce = checkReduction(r.reduce, undefined, 'recipe reduce');
    if (!isIdentity(reduce)) out.reduce = reduce;
  }
  const knowledge = validateKnowledge(r.knowledge);
  if (knowledge) out.knowledge = knowledge;
  if (out.extend === 'outline' && !knowledge?.outline) throw new InputError('recipe extend: got "outline", which extends from the object\'s outline', { field: 'extend', remedy: { cli: 'give the outline too (--outline)', page: 'give the outline too (draw it or give an ellipse in the knowledge panel)' } });
  Object.assign(out, validateIterativeFields(r, validateRecipe));
  return out;
}

/** Checks the slice choice of a cone-beam recipe. */
function validateSliceChoice(v: unknown): SliceChoice {
  if (!isObject(v)) throw new InputError('recipe volume: expected {slices, spacing}');
  if (!Number.isInteger(v.slices) || (v.slices as number) < 1 || (v.slices as number) > 4096) throw new InputError(`recipe volume.slices: got ${v.slices}, expected a whole number from 1 to 4096`);
  if (typeof v.spacing !== 'number' || !(v.spacing > 0) || v.spacing > 100) throw new InputError(`recipe volume.spacing: got ${v.spacing}, expected a slice spacing in mm (0 to 100)`);
  return { slices: v.slices as number, spacing: v.spacing };
}

/** True when the recipe brings known regions or the outline (FBP and FDK then fit their tails to them). */
export function usesKnowledge(recipe: Recipe): boolean {
  return recipe.knowledge !== undefined || recipe.extend === 'outline';
}
