// Running a recipe on a scan: the one entry point the CLI, the page's workers and the tests use.
import type { Workspace } from '../engine/workspace';
import { fovRadius } from '../geometry/view-vectors';
import type { Image2D } from '../image';
import { fbp2d } from '../recon/fbp';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { chooseGrid } from './grid';
import type { Recipe } from './recipe';
import { isIterativeMethod } from '../iterative/options';
import { runIterative, type RecipeInputs } from '../iterative/run';

export type { RecipeInputs } from '../iterative/run';

export interface RecipeResult {
  /** The reconstruction, mu in 1/mm, with the scan's mu_water and FOV radius. */
  image: Image2D;
  warnings: string[];
  /** Method-specific figures (timings, convergence history, ...), JSON-ready. */
  report: Record<string, unknown>;
}

/** Reconstructs `scan` as the recipe says. `inputs` carries images some methods need (a prior). */
export async function runRecipe(ws: Workspace, scan: Scan, recipe: Recipe, hooks: RunHooks = {}, inputs: RecipeInputs = {}): Promise<RecipeResult> {
  if (isIterativeMethod(recipe.method)) {
    return runIterative(ws, scan, recipe, hooks, inputs, (nested, h) => runRecipe(ws, scan, nested, h, inputs));
  }
  const grid = chooseGrid(scan, recipe.grid);
  const r = await fbp2d(ws, scan, { grid, filter: recipe.filter, cutoff: recipe.cutoff }, hooks);
  return {
    image: { ...r.image, fovRadius: fovRadius(scan.geometry) },
    warnings: r.warnings,
    report: { timings: r.timings },
  };
}
