// A recipe: everything that decides how a scan becomes an image. The CLI builds one from its
// options, the page from its form; both run it with runRecipe (run.ts). Plain JSON, so it can
// be stored with the result and shown in reports.
import { InputError } from '../errors';
import { FILTER_WINDOWS, type FilterWindow } from '../recon/filter-design';
import { EXTEND_METHODS, type ExtendMethod } from '../truncation/extend-methods';
import { checkReduction, isIdentity, type Reduction } from '../reduction';
import { ITERATIVE_METHODS, validateIterativeFields, type IterativeFields } from '../iterative/options';
import { validateKnowledge, type Knowledge } from '../knowledge';

/** Reconstruction methods available in this build. */
export const METHODS = ['fbp', ...ITERATIVE_METHODS] as const;
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
  filter: FilterWindow;
  /** Frequency scaling of the filter window, (0, 1]. */
  cutoff: number;
  /** Detector extension before filtering (truncation correction); absent means 'none'. */
  extend?: ExtendMethod;
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

export const DEFAULT_RECIPE: Recipe = { method: 'fbp', filter: 'ram-lak', cutoff: 1, extend: 'none' };

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
  if (typeof r.cutoff !== 'number' || !(r.cutoff > 0 && r.cutoff <= 1)) throw new InputError(`recipe cutoff: got ${r.cutoff}, expected a number in (0, 1]`);
  const out: Recipe = { method: r.method as Method, filter: r.filter as FilterWindow, cutoff: r.cutoff };
  if (r.extend !== undefined) {
    if (!(EXTEND_METHODS as readonly string[]).includes(r.extend as string)) {
      throw new InputError(`recipe extend: got "${r.extend}", expected one of ${EXTEND_METHODS.join(', ')}`);
    }
    out.extend = r.extend as ExtendMethod;
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
