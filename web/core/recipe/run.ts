// Running a recipe on a scan: the one entry point the CLI, the page's workers and the tests use.
import type { Workspace } from '../engine/workspace';
import { InputError } from '../errors';
import { fovRadius } from '../geometry/view-vectors';
import type { Image2D } from '../image';
import { fbp2d } from '../recon/fbp';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { analyseEdges, objectRadius } from '../truncation/edges';
import { planExtension } from '../truncation/extension-plan';
import type { Volume } from '../volume';
import { chooseGrid } from './grid';
import { usesKnowledge, type Recipe } from './recipe';
import { runConeRecipe, type ConeOutput } from './run-cone';
import { isScan, readWholeScan, type ProjectionSource } from '../projection-source';
import type { VolumeInfo } from '../volume-sink';
import { runKnowledgeFbp } from './run-knowledge';
import { isIterativeMethod } from '../iterative/options';
import { runIterative, type RecipeInputs } from '../iterative/run';
import { runDbp } from '../dbp/run';

export type { RecipeInputs } from '../iterative/run';

export interface RecipeResult {
  /** The reconstruction, mu in 1/mm, with the scan's mu_water and FOV radius. */
  image: Image2D;
  warnings: string[];
  /** Method-specific figures (timings, convergence history, ...), JSON-ready. */
  report: Record<string, unknown>;
  /** Cone-beam scans: the whole volume (`image` is then its central slice)... */
  volume?: Volume;
  /** Methods that reconstruct only part of the grid (dbp): 1 where a pixel is not determined. */
  undetermined?: Uint8Array;
  /** ... or, when a sink took the volume slab by slab, its description. */
  volumeInfo?: VolumeInfo;
}

/**
 * Reconstructs a scan (in memory, or a source read a chunk of views at a time) as the recipe
 * says. `inputs` carries images some methods need (a prior); `out` where a cone-beam volume
 * goes (FDK streams; the other methods read the scan whole and hand over their volume).
 */
export async function runRecipe(ws: Workspace, input: Scan | ProjectionSource, recipe: Recipe, hooks: RunHooks = {}, inputs: RecipeInputs = {}, out: ConeOutput = {}): Promise<RecipeResult> {
  if (input.geometry.kind === 'cone' && !isIterativeMethod(recipe.method)) return runConeRecipe(ws, input, recipe, hooks, inputs, out);
  const scan = isScan(input) ? input : await readWholeScan(input, hooks.signal);
  if (isIterativeMethod(recipe.method)) {
    return runIterative(ws, scan, recipe, hooks, inputs, (nested, h) => runRecipe(ws, scan, nested, h, inputs));
  }
  if (recipe.method === 'dbp') return runDbp(ws, scan, recipe, hooks, inputs.masks);
  const t0 = performance.now();
  const extend = recipe.extend ?? 'none';
  const g = scan.geometry;
  const is2d = g.detector.rows === 1;
  if (is2d && usesKnowledge(recipe)) return runKnowledgeFbp(ws, scan, recipe, hooks, inputs);
  if (usesKnowledge(recipe) || extend === 'outline') throw new InputError(`recipe knowledge: known regions and outlines work on 2D and cone-beam scans; this ${g.kind} scan has ${g.detector.rows} rows`);
  if (extend !== 'none' && !is2d) throw new InputError(`recipe extend: got "${extend}" for a ${g.kind} scan with ${g.detector.rows} rows, expected "none" (detector extension works on single-row and cone-beam scans)`);
  const analysis = is2d && (extend !== 'none' || !recipe.grid) ? analyseEdges(scan) : undefined;
  const grid = chooseGrid(scan, recipe.grid, analysis && objectRadius(analysis));
  const plan = extend !== 'none' ? planExtension(scan, extend, analysis) : undefined;
  const planSeconds = (performance.now() - t0) / 1000;
  const r = await fbp2d(ws, scan, { grid, filter: recipe.filter, bandLimit: recipe.bandLimit, extension: plan }, hooks);
  const warnings = [...r.warnings];
  if (plan?.summary.muAssumed) warnings.push(`the scan records no mu_water: the water cylinder fits assume ${plan.summary.muWater} /mm`);
  return {
    image: { ...r.image, fovRadius: fovRadius(scan.geometry) },
    warnings,
    report: { timings: { ...r.timings, plan: planSeconds }, ...(plan ? { extension: plan.summary } : {}) },
  };
}
