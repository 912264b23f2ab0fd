// Running a recipe on a cone-beam scan (runRecipe dispatches here by geometry kind): FDK, with
// the detector extended row by row when the recipe asks for truncation correction.
import type { Workspace } from '../engine/workspace';
import { InputError } from '../errors';
import { fdk3d } from '../recon/fdk';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { planConeExtension } from '../truncation/cone-extension';
import { coneRowExtension } from '../truncation/row-extension';
import { axialSlice, sliceAt } from '../volume';
import type { Recipe } from './recipe';
import type { RecipeInputs, RecipeResult } from './run';
import { runConeKnowledge } from './run-cone-knowledge';
import { chooseVolumeGrid } from './volume-grid';

/** Reconstructs a cone-beam scan: FDK for method fbp. The result's image is the central slice. */
export async function runConeRecipe(ws: Workspace, scan: Scan, recipe: Recipe, hooks: RunHooks = {}, inputs: RecipeInputs = {}): Promise<RecipeResult> {
  if (recipe.method !== 'fbp') {
    throw new InputError(`recipe method: got "${recipe.method}", expected fbp (FDK) for a cone-beam scan`);
  }
  const t0 = performance.now();
  const extend = recipe.extend ?? 'none';
  if (recipe.knowledge || extend === 'outline') return runConeKnowledge(ws, scan, recipe, hooks, inputs);
  // The edge analysis takes the first 5% of the progress bar, FDK the rest.
  const plan = extend !== 'none'
    ? await planConeExtension(scan, extend, { signal: hooks.signal, onProgress: (f, stage) => hooks.onProgress?.(0.05 * f, stage) })
    : undefined;
  const grid = chooseVolumeGrid(scan, recipe.grid, recipe.volume, plan?.objectRadius);
  const planSeconds = (performance.now() - t0) / 1000;
  const extension = plan ? coneRowExtension(plan, scan.geometry.detector.channels) : undefined;
  const r = await fdk3d(ws, scan, { grid, filter: recipe.filter, bandLimit: recipe.bandLimit, extension }, {
    signal: hooks.signal,
    onProgress: (f, stage) => hooks.onProgress?.(plan ? 0.05 + 0.95 * f : f, stage),
  });
  const warnings = [...r.warnings];
  if (plan?.summary.muAssumed) warnings.push(`the scan records no mu_water: the water cylinder fits assume ${plan.summary.muWater} /mm`);
  return {
    image: axialSlice(r.volume, sliceAt(grid, 0)),
    volume: r.volume,
    warnings,
    report: { algorithm: 'fdk', scanType: r.scanType, timings: { ...r.timings, plan: planSeconds }, ...(plan ? { extension: plan.summary } : {}) },
  };
}
