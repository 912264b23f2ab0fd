// Running a recipe on a cone-beam scan (runRecipe dispatches here by geometry kind): FDK, with
// the detector extended row by row when the recipe asks for truncation correction. FDK streams
// the projections from a source a chunk of views at a time; truncation correction plans on the
// whole scan, so it reads the source whole first (as known regions and the outline do, which
// return the volume whole). The volume goes to the caller's sink slab by
// slab when one is given (the page's storage, a file), else it is returned whole.
import type { Workspace } from '../engine/workspace';
import { InputError } from '../errors';
import { fdkToSink } from '../recon/fdk';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { isScan, readWholeScan, type ProjectionSource } from '../projection-source';
import { centralRowOfSource } from '../truncation/central-row';
import { coneObjectRadius, planConeExtension } from '../truncation/cone-extension';
import { objectRadius, analyseEdges } from '../truncation/edges';
import { coneRowExtension } from '../truncation/row-extension';
import { coneFovHalfHeight } from '../geometry/cone';
import { fovRadius } from '../geometry/view-vectors';
import { sliceAt, type VolumeGrid } from '../volume';
import { collectVolume, teeSinks, type VolumeInfo, type VolumeSink } from '../volume-sink';
import { SliceCatcher } from './slice-catcher';
import { usesKnowledge, type Recipe } from './recipe';
import type { RecipeInputs, RecipeResult } from './run';
import { runConeKnowledge } from './run-cone-knowledge';
import { chooseVolumeGrid } from './volume-grid';

/** Where a cone-beam run puts its volume, and what it may know about the scan beforehand. */
export interface ConeOutput {
  /** Called once, before any slab, with the volume's description: the sink for its slabs. */
  sink?: (info: VolumeInfo) => VolumeSink;
  /** The scan's central detector row as a fan-beam scan (the page keeps it): spares a pass for the grid. */
  centralRow?: Scan;
}

/** The object's radius from the central row (from the caller, the scan, or a pass over the source). */
async function radiusOf(scan: Scan | ProjectionSource, out: ConeOutput, signal?: AbortSignal): Promise<number> {
  if (out.centralRow) return objectRadius(analyseEdges(out.centralRow));
  if (isScan(scan)) return coneObjectRadius(scan);
  return objectRadius(analyseEdges(await centralRowOfSource(scan, signal)));
}

/** Reconstructs a cone-beam scan: FDK for method fbp. The result's image is the central slice. */
export async function runConeRecipe(
  ws: Workspace, input: Scan | ProjectionSource, recipe: Recipe, hooks: RunHooks = {}, inputs: RecipeInputs = {}, out: ConeOutput = {},
): Promise<RecipeResult> {
  if (recipe.method !== 'fbp') {
    const got = recipe.method === 'dbp' ? 'DBP takes 2D scans only (parallel or fan beam, one detector row)' : `got "${recipe.method}"`;
    throw new InputError(`recipe method: ${got}; a cone-beam scan takes fbp (FDK) or an iterative method (sart, tv, wtv, prior)`);
  }
  const t0 = performance.now();
  const extend = recipe.extend ?? 'none';
  // Knowledge fits the tails to the whole scan and runs FDK twice: it holds the scan and returns its volume whole.
  if (usesKnowledge(recipe) || extend === 'outline') return runConeKnowledge(ws, isScan(input) ? input : await readWholeScan(input, hooks.signal), recipe, hooks, inputs);
  // Truncation correction plans on every row of every view: the whole scan in memory.
  const scan = extend !== 'none' && !isScan(input) ? await readWholeScan(input, hooks.signal) : input;
  // The edge analysis takes the first 5% of the progress bar, FDK the rest.
  const plan = extend !== 'none'
    ? await planConeExtension(scan as Scan, extend, { signal: hooks.signal, onProgress: (f, stage) => hooks.onProgress?.(0.05 * f, stage) })
    : undefined;
  const g = scan.geometry;
  const grid: VolumeGrid = recipe.grid?.pixel !== undefined || plan
    ? chooseVolumeGrid(g, recipe.grid, recipe.volume, plan?.objectRadius ?? 0)
    : chooseVolumeGrid(g, recipe.grid, recipe.volume, await radiusOf(scan, out, hooks.signal));
  const planSeconds = (performance.now() - t0) / 1000;
  const extension = plan ? coneRowExtension(plan, g.detector.channels) : undefined;
  const info: VolumeInfo = { grid, quantity: 'mu', muWater: scan.muWater, fovRadius: fovRadius(g), fovHalfHeight: coneFovHalfHeight(g) };
  const slice = new SliceCatcher(grid, sliceAt(grid, 0));
  const collected = out.sink ? undefined : collectVolume(grid);
  // The caller's sink is made when the first slab leaves the engine (after every view was read).
  let sink: VolumeSink | undefined;
  const r = await fdkToSink(ws, scan, { grid, filter: recipe.filter, bandLimit: recipe.bandLimit, extension }, {
    write: async (k0, slab) => {
      sink ??= teeSinks(slice, out.sink ? out.sink(info) : collected!.sink);
      await sink.write(k0, slab);
    },
  }, {
    signal: hooks.signal,
    onProgress: (f, stage) => hooks.onProgress?.(plan ? 0.05 + 0.95 * f : f, stage),
  });
  const warnings = [...r.warnings];
  if (plan?.summary.muAssumed) warnings.push(`the scan records no mu_water: the water cylinder fits assume ${plan.summary.muWater} /mm`);
  return {
    image: slice.image(r.info),
    ...(collected ? { volume: { ...r.info, data: collected.data } } : { volumeInfo: r.info }),
    warnings,
    report: {
      algorithm: 'fdk', backprojector: r.backprojector, scanType: r.scanType, timings: { ...r.timings, plan: planSeconds },
      ...(plan ? { extension: plan.summary } : {}),
    },
  };
}
