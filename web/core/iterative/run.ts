// Running an iterative recipe (sart, tv, wtv, prior): prior, grid, problem set-up, iterations,
// and the report (convergence history, per-view residuals, departure from the prior). 2D scans
// give an image; cone-beam scans a volume (space.ts), whose central slice is the image.
import type { Buf, Workspace } from '../engine/workspace';
import { InputError, throwIfCancelled } from '../errors';
import type { MaskInputs } from '../knowledge';
import { coneFovHalfHeight } from '../geometry/cone';
import { fovRadius } from '../geometry/view-vectors';
import { squareGrid, type Image2D, type ImageGrid } from '../image';
import { chooseGrid, DEFAULT_GRID_SIZE } from '../recipe/grid';
import type { Recipe } from '../recipe/recipe';
import { chooseVolumeGrid } from '../recipe/volume-grid';
import { require2d } from '../recon/projector';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { axialSlice, sliceAt, type Volume } from '../volume';
import { resolveOptions, type IterativeMethod } from './options';
import { OsSart } from './os-sart';
import { negativePriorWarning, priorOnGrid, priorVolumeOnGrid, type PriorOnGrid } from './prior';
import { checkScanData, perViewSquares, setUpProblem, supportMask, type Problem } from './problem';
import { iterativeReport } from './report';
import { solve } from './solve';
import { gridSize, isVolumeGrid, type ReconGrid } from './space';

/** Images a recipe run may need besides the scan. */
export interface RecipeInputs {
  /** The prior of method "prior" when its source is "image" (any grid; resampled). */
  prior?: Image2D;
  /** The same for a cone-beam scan: a prior volume (any grid; trilinear resampling). */
  priorVolume?: Volume;
  /** The support mask when the recipe's support is "image": > 0.5 inside (any grid; resampled). */
  supportMask?: Image2D;
  /** Mask images named by the recipe's knowledge (known regions, outline), by name. */
  masks?: MaskInputs;
  /**
   * Floats OS-SART may spend on per-subset pixel weights (default PIXEL_WEIGHT_BUDGET); the
   * memory budget raises it when every subset's weights fit (memory-budget.ts).
   */
  pixelWeightFloats?: number;
}

/** What runRecipe returns (the same shape as recipe/run.ts RecipeResult). */
export interface IterativeResult {
  image: Image2D;
  warnings: string[];
  report: Record<string, unknown>;
  /** Cone-beam scans: the volume (`image` is its central slice). */
  volume?: Volume;
}

/** Runs another recipe on the same scan (recipe/run.ts runRecipe, passed in to avoid an import cycle). */
export type NestedRun = (recipe: Recipe, hooks: RunHooks) => Promise<IterativeResult>;

const now = () => performance.now() / 1000;

/** A square grid of DEFAULT_GRID_SIZE pixels centred on the isocentre that covers `g`. */
function gridCovering(g: ImageGrid): ImageGrid {
  const half = Math.max(Math.abs(g.cx) + (g.nx * g.dx) / 2, Math.abs(g.cy) + (g.ny * g.dy) / 2);
  return squareGrid(DEFAULT_GRID_SIZE, (2 * half) / DEFAULT_GRID_SIZE);
}

function scaled(hooks: RunHooks, from: number, to: number): RunHooks {
  const p = hooks.onProgress;
  return { signal: hooks.signal, onProgress: p ? (f, stage) => p(from + (to - from) * f, stage) : undefined };
}

/** The prior as obtained: an image (2D) or a volume (cone beam); `given`: it came from the caller, on its own grid. */
interface ObtainedPrior {
  image: Image2D;
  volume?: Volume;
  warnings: string[];
  given?: boolean;
}

async function obtainPrior(recipe: Recipe, inputs: RecipeInputs, nested: NestedRun, hooks: RunHooks, cone: boolean): Promise<ObtainedPrior> {
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
  const r = await nested(own, hooks);
  return { image: r.image, volume: r.volume, warnings: r.warnings.map((w) => `prior (${src.recipe.method}): ${w}`) };
}

/**
 * Writes the start image (the prior, or zeros) into x; for a prior, fits the unmeasured channels
 * of the target to its projections. Returns the squared measured residual of the start image.
 */
async function prepareStart(ws: Workspace, sart: OsSart, x: Buf, problem: Problem, prior?: Float32Array): Promise<number> {
  const { nViews, rows, nCh, target } = problem;
  const [k0, k1] = problem.measured;
  await ws.write(x, prior ?? new Float32Array(gridSize(problem.grid)));
  await sart.projector.forward(x, sart.corr);
  const start = await ws.read(sart.corr);
  if (prior) {
    // Every detector row of every view: the unmeasured channels take the prior's projections.
    for (let q = 0; q < nViews * rows; q++) {
      target.set(start.subarray(q * nCh, q * nCh + k0), q * nCh);
      target.set(start.subarray(q * nCh + k1, (q + 1) * nCh), q * nCh + k1);
    }
    await ws.write(sart.target, target);
  }
  return perViewSquares(start, target, nCh, k0, k1, false, rows).reduce((s, v) => s + v, 0);
}

/**
 * The grid: the recipe's, else the prior's extent, else as FBP / FDK choose it (a cone-beam
 * scan's volume: recipe/volume-grid.ts; a prior volume reconstructed from the scan sets it, a
 * given one is resampled onto it).
 */
function chooseIterativeGrid(scan: Scan, recipe: Recipe, prior?: ObtainedPrior): ReconGrid {
  if (scan.geometry.kind === 'cone') return !recipe.grid && !recipe.volume && prior?.volume && !prior.given ? prior.volume.grid : chooseVolumeGrid(scan, recipe.grid, recipe.volume);
  return recipe.grid ? squareGrid(recipe.grid.size, recipe.grid.pixel) : prior ? gridCovering(prior.image.grid) : chooseGrid(scan);
}

/** Reconstructs `scan` with an iterative method. Nothing is returned or kept when cancelled. */
export async function runIterative(
  ws: Workspace, scan: Scan, recipe: Recipe, hooks: RunHooks, inputs: RecipeInputs, nested: NestedRun,
): Promise<IterativeResult> {
  const t0 = now();
  const method = recipe.method as IterativeMethod;
  const o = resolveOptions(method, recipe);
  throwIfCancelled(hooks.signal);
  const cone = scan.geometry.kind === 'cone';
  if (!cone) require2d(scan.geometry);
  checkScanData(scan);
  const obtained = method === 'prior' ? await obtainPrior(recipe, inputs, nested, scaled(hooks, 0, 0.05), cone) : undefined;
  const warnings: string[] = obtained?.warnings ?? [];
  const grid = chooseIterativeGrid(scan, recipe, obtained);
  const support = supportMask(grid, o.support, inputs.supportMask);
  const d = scan.geometry.detector;
  const nViews = scan.data.length / (d.channels * d.rows);
  const subsets = Math.min(o.subsets, nViews);
  if (subsets < o.subsets) warnings.push(`subsets: ${o.subsets} asked, the scan has ${nViews} views; using ${subsets}`);
  const problem = setUpProblem(scan, grid, support, subsets, method === 'prior' ? o.priorWeight : 0);
  let prior: PriorOnGrid | undefined;
  if (obtained && isVolumeGrid(grid)) {
    if (!obtained.volume) throw new InputError(`prior: the recipe "${recipe.prior?.source === 'recipe' ? recipe.prior.recipe.method : 'image'}" gave no volume for this cone-beam scan`);
    prior = priorVolumeOnGrid(obtained.volume, grid);
  } else if (obtained) {
    prior = priorOnGrid(obtained.image, grid as ImageGrid, support);
  }
  if (prior) warnings.push(...prior.warnings);
  if (prior?.negative && obtained?.given) warnings.push(negativePriorWarning(prior.negative, o.nonNegative !== false));
  const fov = fovRadius(scan.geometry);
  const reach = Math.min(grid.nx * grid.dx, grid.ny * grid.dy) / 2;
  if (method === 'prior' && reach < 1.2 * fov) {
    warnings.push(`the grid reaches only ${reach.toFixed(0)} mm from its centre, little beyond the measured FOV (radius ${fov.toFixed(0)} mm): the object outside the FOV is not reconstructed; give a grid (size, pixel) that covers the whole object`);
  }

  ws.reset();
  throwIfCancelled(hooks.signal);
  hooks.onProgress?.(0.05, 'setup');
  const sart = await OsSart.create(ws, { ...problem, support: Float32Array.from(support), pixelWeightBudget: inputs.pixelWeightFloats }, scaled(hooks, 0.05, 0.06));
  const x = ws.alloc('image', gridSize(grid));
  const startResidual = await prepareStart(ws, sart, x, problem, prior?.data.map((v, i) => v * support[i]));
  const t1 = now();

  const measuredRays = problem.nViews * (problem.measured[1] - problem.measured[0]);
  const outcome = await solve({ ws, grid, sart, x, startResidual, measuredRays }, method, o, scaled(hooks, 0.06, 0.99));
  const t2 = now();

  await sart.projector.forward(x, sart.corr);
  const image = await ws.read(x);
  const report = iterativeReport({
    method, options: { ...o, subsets }, problem, outcome, startResidual, finalSino: await ws.read(sart.corr), image,
    prior: prior?.data, priorNegative: prior?.negative, fov, muWater: scan.muWater,
  });
  report.timings = { setup: t1 - t0, iterations: t2 - t1, total: now() - t0 };
  const bad = image.reduce((n, v) => n + (Number.isFinite(v) ? 0 : 1), 0);
  if (bad > 0) warnings.push(`the result has ${bad} ${isVolumeGrid(grid) ? 'voxels' : 'pixels'} that are not finite numbers: do not trust it`);
  hooks.onProgress?.(1, 'done');
  if (isVolumeGrid(grid)) {
    const volume: Volume = { grid, data: image, quantity: 'mu', muWater: scan.muWater, fovRadius: fov, fovHalfHeight: coneFovHalfHeight(scan.geometry) };
    return { image: axialSlice(volume, sliceAt(grid, 0)), volume, warnings, report };
  }
  return { image: { grid, data: image, quantity: 'mu', muWater: scan.muWater, fovRadius: fov }, warnings, report };
}
