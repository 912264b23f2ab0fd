// The data-consistent step after a prior: the prior-guided method (recipe method "prior")
// fits the measured channels to the measured data and the channels beyond the detector to the
// prior's projections, starting from the prior (web/core/iterative). Every caller (the page's
// network-prior job, tests) reaches that method through this one function.
import type { Workspace } from '../engine/workspace';
import type { Image2D, ImageGrid } from '../image';
import { validateRecipe } from '../recipe/recipe';
import { runRecipe, type RecipeResult } from '../recipe/run';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';

/** Options of the data-consistent step that the page and the CLI expose. */
export interface DataConsistentOptions {
  /** Reconstruction grid (the prior is resampled onto it). */
  grid: ImageGrid;
  /** Outer iterations; absent: the method's default. */
  iterations?: number;
}

/** Reconstructs `scan` with the prior-guided data-consistent method from `prior` (any grid, mu or HU). */
export async function dataConsistentFromPrior(ws: Workspace, scan: Scan, prior: Image2D, options: DataConsistentOptions, hooks: RunHooks = {}): Promise<RecipeResult> {
  const recipe = validateRecipe({
    method: 'prior',
    prior: { source: 'image' },
    grid: { size: options.grid.nx, pixel: options.grid.dx },
    ...(options.iterations !== undefined ? { iterations: options.iterations } : {}),
  });
  return runRecipe(ws, scan, recipe, hooks, { prior });
}
