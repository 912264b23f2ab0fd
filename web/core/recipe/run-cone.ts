// Running a recipe on a cone-beam scan (runRecipe dispatches here by geometry kind).
import type { Workspace } from '../engine/workspace';
import { InputError } from '../errors';
import { fdk3d } from '../recon/fdk';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { axialSlice, sliceAt } from '../volume';
import type { Recipe } from './recipe';
import type { RecipeResult } from './run';
import { chooseVolumeGrid } from './volume-grid';

/** Reconstructs a cone-beam scan: FDK for method fbp. The result's image is the central slice. */
export async function runConeRecipe(ws: Workspace, scan: Scan, recipe: Recipe, hooks: RunHooks = {}): Promise<RecipeResult> {
  if (recipe.method !== 'fbp') {
    throw new InputError(`recipe method: got "${recipe.method}", expected fbp (FDK) for a cone-beam scan`);
  }
  const grid = chooseVolumeGrid(scan, recipe.grid, recipe.volume);
  const r = await fdk3d(ws, scan, { grid, filter: recipe.filter, cutoff: recipe.cutoff }, hooks);
  return {
    image: axialSlice(r.volume, sliceAt(grid, 0)),
    volume: r.volume,
    warnings: r.warnings,
    report: { algorithm: 'fdk', scanType: r.scanType, timings: r.timings },
  };
}
