// Where an iterative reconstruction starts. The prior-guided method starts from its prior (an
// image or volume handed in, or another recipe's result on the scan). sart, tv and wtv start by
// default from the best FBP correction for what the recipe knows (recipe/best-fbp.ts), run on their
// own grid: their updates lie in the range of A^T over the measured rays, so the part of the
// start that the truncated data cannot see (their null space: a smooth field inside the field of
// view) is kept, and a good start matters most (DEVELOPERS.md "Iterative reconstruction").
import { InputError } from '../errors';
import type { Image2D } from '../image';
import { fbpRecipeForKnowledge } from '../recipe/knowledge-recipe';
import type { Recipe } from '../recipe/recipe';
import type { RunHooks } from '../run-hooks';
import { axialSlice, sliceAt, type Volume } from '../volume';
import type { IterativeOptions } from './options';
import type { NestedRun, RecipeInputs } from './run';
import { isVolumeGrid, type ReconGrid } from './space';

/** A start image as obtained: an image (2D) or a volume (cone beam). */
export interface ObtainedStart {
  image: Image2D;
  volume?: Volume;
  warnings: string[];
  /** It came from the caller, on its own grid. */
  given?: boolean;
  /** The recipe run to make it, when one was run. */
  recipe?: Recipe;
  /** That run's report (for FBP with knowledge: the regions and residual before and after). */
  report?: Record<string, unknown>;
}

/** The prior of method "prior": the image handed in, or the result of its recipe on the scan. */
export async function obtainPrior(recipe: Recipe, inputs: RecipeInputs, nested: NestedRun, hooks: RunHooks, cone: boolean): Promise<ObtainedStart> {
  const src = recipe.prior;
  if (!src) throw new InputError('recipe prior: method "prior" needs a prior');
  if (src.source === 'image') {
    if (cone) {
      const v = inputs.priorVolume;
      if (!v) throw new InputError('prior: a cone-beam scan takes a prior volume (a volume file) or a recipe on the scan (e.g. "fbp:water"); none was given');
      return { image: axialSlice(v, sliceAt(v.grid, 0)), volume: v, warnings: [], given: true };
    }
    if (!inputs.prior) throw new InputError('prior: the recipe takes its prior from an image, but none was given');
    return { image: inputs.prior, warnings: [], given: true };
  }
  // A cone-beam prior is reconstructed on the recipe's volume when its own recipe names none
  // (no resampling, and no default-sized volume for a small problem).
  const own = cone && !src.recipe.grid && !src.recipe.volume ? { ...src.recipe, grid: recipe.grid, volume: recipe.volume } : src.recipe;
  return runStartRecipe(own, nested, hooks, 'prior');
}

/**
 * The start of sart, tv and wtv on `grid`: the best FBP (FDK) for the recipe's knowledge, or
 * none (the zero image) when the recipe asks for that. Without a choice: the FBP when the scan is
 * truncated or something is known; else zero, since complete data determine the image and
 * SART's first sweeps from zero smooth the noise that an FBP start would bring in (on the noisy
 * Shepp-Logan test of test/iterative/tv.test.ts, wTV from a ramp-filtered FBP ended 65% above
 * wTV from zero).
 */
export async function obtainStart(recipe: Recipe, o: IterativeOptions, grid: ReconGrid, truncated: boolean, nested: NestedRun, hooks: RunHooks): Promise<ObtainedStart | undefined> {
  const start = o.start === undefined || o.start === 'auto' ? (truncated || recipe.knowledge ? 'fbp' : 'zero') : o.start;
  if (start === 'zero') return undefined;
  // The recipe's filter window and band limit are the start's (a smoother window on noisy data);
  // the same grid as the iterations (square grids centred on the isocentre, recipe/grid.ts).
  const choices = { filter: recipe.filter, ...(recipe.bandLimit ? { bandLimit: recipe.bandLimit } : {}) };
  const fbp = isVolumeGrid(grid)
    ? { ...fbpRecipeForKnowledge(recipe.knowledge, choices), ...(recipe.grid ? { grid: recipe.grid } : {}), ...(recipe.volume ? { volume: recipe.volume } : {}) }
    : fbpRecipeForKnowledge(recipe.knowledge, { ...choices, grid: { size: grid.nx, pixel: grid.dx } });
  return runStartRecipe(fbp, nested, hooks, 'start');
}

async function runStartRecipe(recipe: Recipe, nested: NestedRun, hooks: RunHooks, what: 'prior' | 'start'): Promise<ObtainedStart> {
  const r = await nested(recipe, hooks);
  return { image: r.image, volume: r.volume, warnings: r.warnings.map((w) => `${what} (${recipe.method}): ${w}`), recipe, report: r.report };
}
