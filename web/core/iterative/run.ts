// Running an iterative recipe (sart, tv, wtv, prior): prior, grid, problem set-up, iterations,
// and the report (convergence history, per-view residuals, departure from the prior). 2D scans
// give an image; cone-beam scans a volume (space.ts), whose central slice is the image.
import type { Buf, Workspace } from '../engine/workspace';
import { throwIfCancelled } from '../errors';
import { describeOutline, placeKnowledge, type MaskInputs, type PlacedKnowledge } from '../knowledge';
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
import { completeWithPrior } from './completion';
import { INSIDE_STEP, insideStepScale, scanTruncation, type ScanTruncation } from './inside-step';
import { KnownRegions } from './known-regions';
import { negativePriorWarning, startOnGrid } from './prior';
import { obtainPrior, obtainStart, type ObtainedStart } from './start';
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

/**
 * Writes the start image (or zeros) into x; for the prior-guided method, fits the unmeasured
 * channels of the target to the prior's projections joined to the measured edges
 * (completion.ts). Returns the squared measured residual of the start image.
 */
async function prepareStart(ws: Workspace, sart: OsSart, x: Buf, problem: Problem, start: Float32Array | undefined, complete: { fov: number } | undefined): Promise<number> {
  const { nViews, rows, nCh, target } = problem;
  const [k0, k1] = problem.measured;
  await ws.write(x, start ?? new Float32Array(gridSize(problem.grid)));
  await sart.projector.forward(x, sart.corr);
  const projected = await ws.read(sart.corr);
  if (complete) {
    completeWithPrior(target, projected, { geometry: problem.extension.geometry, measured: problem.measured, nCh, lines: nViews * rows, taperMm: complete.fov });
    await ws.write(sart.target, target);
  }
  return perViewSquares(projected, target, nCh, k0, k1, false, rows).reduce((s, v) => s + v, 0);
}

/**
 * The grid: the recipe's, else the prior's extent, else as FBP / FDK choose it (a cone-beam
 * scan's volume: recipe/volume-grid.ts; a prior volume reconstructed from the scan sets it, a
 * given one is resampled onto it).
 */
function chooseIterativeGrid(scan: Scan, recipe: Recipe, prior?: ObtainedStart): ReconGrid {
  if (scan.geometry.kind === 'cone') return !recipe.grid && !recipe.volume && prior?.volume && !prior.given ? prior.volume.grid : chooseVolumeGrid(scan, recipe.grid, recipe.volume);
  return recipe.grid ? squareGrid(recipe.grid.size, recipe.grid.pixel) : prior ? gridCovering(prior.image.grid) : chooseGrid(scan);
}

/** True when the run starts from a reconstruction of this scan's own data (its default start, or a prior recipe run on the scan). */
function ownDataStart(method: IterativeMethod, recipe: Recipe, start?: ObtainedStart): boolean {
  if (!start) return false;
  return method !== 'prior' || recipe.prior?.source === 'recipe';
}

/**
 * Measured-data residual (relative to the data) above which an outline support is reported as
 * contradicting the data: with the outline right, the runs of the severe-truncation cases ended
 * below 1% (noise-free) and the noisy demo scan near 1.5%; an outline leaving out the arms of the
 * thorax phantom ended at 5%.
 */
const OUTLINE_RESIDUAL = 0.03;

function outlineWarning(support: string, report: Record<string, unknown>): string[] {
  const after = (report.knowledge as { residual?: { after?: { relative: number } } } | undefined)?.residual?.after?.relative;
  if (support !== 'outline' || after === undefined || after <= OUTLINE_RESIDUAL) return [];
  return [`the measured data disagree with the outline as the support (residual ${(100 * after).toFixed(1)}% of the data at the end): part of the object (arms, a table, a head holder) may lie outside the outline; draw it around everything in the beam, or use the default support`];
}

/**
 * A note when the grid does not hold the object (the prior-guided method: when it reaches little
 * beyond the field of view). On a truncated scan every measured ray also crosses the object
 * outside the field of view; what lies beyond the grid cannot be placed there, so that part of
 * the data pulls the inside of the field as well, more with every iteration (a cone-beam case:
 * SART from FDK fitted to a known region went from 107 to 124 HU inside in 10 iterations on a
 * grid reaching 128 mm of a 170 mm half-width; test/iterative/volume-knowledge.test.ts).
 */
function gridReachWarning(grid: ReconGrid, fov: number, method: IterativeMethod, t: ScanTruncation): string[] {
  const reach = Math.min(grid.nx * grid.dx, grid.ny * grid.dy) / 2;
  const remedy = 'give a grid (size, pixel) that covers the whole object';
  if (t.truncated && reach < t.objectRadiusMm) {
    return [`the grid reaches only ${reach.toFixed(0)} mm from its centre, but the object reaches about ${t.objectRadiusMm.toFixed(0)} mm (estimated from the data): what the rays cross beyond the grid cannot be placed and pulls the inside of the field of view too; ${remedy}`];
  }
  if (method === 'prior' && reach < 1.2 * fov) {
    return [`the grid reaches only ${reach.toFixed(0)} mm from its centre, little beyond the measured FOV (radius ${fov.toFixed(0)} mm): the object outside the FOV is not reconstructed; ${remedy}`];
  }
  return [];
}

/** The recipe's knowledge placed on the grid (InputError naming a region that does not fit). */
function placeOnGrid(recipe: Recipe, grid: ReconGrid, fov: number, scan: Scan, inputs: RecipeInputs): PlacedKnowledge {
  if (!recipe.knowledge) return { regions: [] };
  return placeKnowledge(recipe.knowledge, { grid, fovRadius: fov, muWater: scan.muWater, masks: inputs.masks });
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
  const prior = method === 'prior' ? await obtainPrior(recipe, inputs, nested, scaled(hooks, 0, 0.05), cone) : undefined;
  const grid = chooseIterativeGrid(scan, recipe, prior);
  const fov = fovRadius(scan.geometry);
  const knowledge = placeOnGrid(recipe, grid, fov, scan, inputs);
  const truncation = scanTruncation(scan);
  const truncated = truncation.truncated;
  const obtained = prior ?? (await obtainStart(recipe, o, grid, truncated, nested, scaled(hooks, 0, 0.05)));
  const warnings: string[] = [...(obtained?.warnings ?? [])];
  const support = supportMask(grid, o.support, inputs.supportMask, knowledge.outline);
  const d = scan.geometry.detector;
  const nViews = scan.data.length / (d.channels * d.rows);
  const subsets = Math.min(o.subsets, nViews);
  if (subsets < o.subsets) warnings.push(`subsets: ${o.subsets} asked, the scan has ${nViews} views; using ${subsets}`);
  const ownData = ownDataStart(method, recipe, obtained);
  // A prior made from the scan's own data says nothing beyond the detector that its extension did
  // not assume: its projections there are not fitted unless asked (DEVELOPERS.md).
  const priorWeight = method !== 'prior' ? 0 : recipe.priorWeight ?? (ownData ? 0 : o.priorWeight);
  const problem = setUpProblem(scan, grid, support, subsets, priorWeight);
  const start = obtained ? startOnGrid(obtained, grid, support, method === 'prior' ? 'prior' : 'start') : undefined;
  if (start) warnings.push(...start.warnings);
  if (start?.negative && obtained?.given) warnings.push(negativePriorWarning(start.negative, o.nonNegative !== false));
  warnings.push(...gridReachWarning(grid, fov, method, truncation));

  ws.reset();
  throwIfCancelled(hooks.signal);
  hooks.onProgress?.(0.05, 'setup');
  const insideStep = o.insideStep ?? (ownData && truncated ? INSIDE_STEP : 1);
  const stepScale = insideStep < 1 ? insideStepScale(grid, fov, insideStep) : undefined;
  const sart = await OsSart.create(ws, { ...problem, support: Float32Array.from(support), stepScale, pixelWeightBudget: inputs.pixelWeightFloats }, scaled(hooks, 0.05, 0.06));
  const x = ws.alloc('image', gridSize(grid));
  const startImage = start?.data.map((v, i) => v * support[i]);
  const startResidual = await prepareStart(ws, sart, x, problem, startImage, priorWeight > 0 ? { fov } : undefined);
  const regions = await KnownRegions.create(ws, grid, knowledge.regions, fov, support);
  const t1 = now();

  const measuredRays = problem.nViews * (problem.measured[1] - problem.measured[0]);
  const outcome = await solve({ ws, grid, sart, x, startResidual, measuredRays, regions, scaledSteps: insideStep < 1 }, method, o, scaled(hooks, 0.06, 0.99));
  const t2 = now();

  await sart.projector.forward(x, sart.corr);
  const image = await ws.read(x);
  const report = iterativeReport({
    method, options: { ...o, subsets, insideStep, priorWeight }, problem, outcome, startResidual, finalSino: await ws.read(sart.corr), image,
    prior: method === 'prior' ? start?.data : undefined, priorNegative: method === 'prior' ? start?.negative : undefined, fov, muWater: scan.muWater,
    start: startImage, startRecipe: obtained?.recipe, startReport: obtained?.report, knowledge: knowledge.regions,
    knowledgeUsed: [...knowledge.regions.map((k) => k.name), ...(recipe.knowledge?.outline ? [describeOutline(recipe.knowledge.outline)] : [])],
  });
  report.timings = { setup: t1 - t0, iterations: t2 - t1, total: now() - t0 };
  warnings.push(...outlineWarning(o.support, report));
  const bad = image.reduce((n, v) => n + (Number.isFinite(v) ? 0 : 1), 0);
  if (bad > 0) warnings.push(`the result has ${bad} ${isVolumeGrid(grid) ? 'voxels' : 'pixels'} that are not finite numbers: do not trust it`);
  hooks.onProgress?.(1, 'done');
  if (isVolumeGrid(grid)) {
    const volume: Volume = { grid, data: image, quantity: 'mu', muWater: scan.muWater, fovRadius: fov, fovHalfHeight: coneFovHalfHeight(scan.geometry) };
    return { image: axialSlice(volume, sliceAt(grid, 0)), volume, warnings, report };
  }
  return { image: { grid, data: image, quantity: 'mu', muWater: scan.muWater, fovRadius: fov }, warnings, report };
}
