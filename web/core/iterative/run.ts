// Running an iterative recipe (sart, tv, wtv, prior): prior, grid, problem set-up, iterations,
// and the report (convergence history, per-view residuals, departure from the prior).
import type { Workspace } from '../engine/workspace';
import { InputError } from '../errors';
import { fovRadius } from '../geometry/view-vectors';
import { squareGrid, type Image2D, type ImageGrid } from '../image';
import { chooseGrid, DEFAULT_GRID_SIZE } from '../recipe/grid';
import type { Recipe } from '../recipe/recipe';
import { require2d } from '../recon/projector';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { resolveOptions, type IterativeMethod } from './options';
import { OsSart } from './os-sart';
import { departureFromPrior, priorOnGrid } from './prior';
import { checkScanData, perViewSquares, setUpProblem, supportMask } from './problem';
import { solve } from './solve';
import { unpermute } from './subsets';

/** Images a recipe run may need besides the scan. */
export interface RecipeInputs {
  /** The prior of method "prior" when its source is "image" (any grid; resampled). */
  prior?: Image2D;
  /** The support mask when the recipe's support is "image": > 0.5 inside (any grid; resampled). */
  supportMask?: Image2D;
}

/** What runRecipe returns (the same shape as recipe/run.ts RecipeResult). */
export interface IterativeResult {
  image: Image2D;
  warnings: string[];
  report: Record<string, unknown>;
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

async function obtainPrior(recipe: Recipe, inputs: RecipeInputs, nested: NestedRun, hooks: RunHooks): Promise<{ image: Image2D; warnings: string[] }> {
  const src = recipe.prior;
  if (!src) throw new InputError('recipe prior: method "prior" needs a prior');
  if (src.source === 'image') {
    if (!inputs.prior) throw new InputError('prior: the recipe takes its prior from an image, but none was given');
    return { image: inputs.prior, warnings: [] };
  }
  const r = await nested(src.recipe, hooks);
  return { image: r.image, warnings: r.warnings.map((w) => `prior (${src.recipe.method}): ${w}`) };
}

/** Reconstructs `scan` with an iterative method. Nothing is returned or kept when cancelled. */
export async function runIterative(
  ws: Workspace, scan: Scan, recipe: Recipe, hooks: RunHooks, inputs: RecipeInputs, nested: NestedRun,
): Promise<IterativeResult> {
  const t0 = now();
  const method = recipe.method as IterativeMethod;
  const o = resolveOptions(method, recipe);
  require2d(scan.geometry);
  checkScanData(scan);
  const obtained = method === 'prior' ? await obtainPrior(recipe, inputs, nested, scaled(hooks, 0, 0.05)) : undefined;
  const warnings: string[] = obtained?.warnings ?? [];
  const priorImage = obtained?.image;
  const grid = recipe.grid ? squareGrid(recipe.grid.size, recipe.grid.pixel) : priorImage ? gridCovering(priorImage.grid) : chooseGrid(scan);
  const support = supportMask(grid, o.support, inputs.supportMask);
  const nViews = scan.data.length / scan.geometry.detector.channels;
  const subsets = Math.min(o.subsets, nViews);
  if (subsets < o.subsets) warnings.push(`subsets: ${o.subsets} asked, the scan has ${nViews} views; using ${subsets}`);
  const problem = setUpProblem(scan, grid, support, subsets, method === 'prior' ? o.priorWeight : 0);
  const prior = priorImage ? priorOnGrid(priorImage, grid, support) : undefined;
  if (prior) warnings.push(...prior.warnings);
  const fov = fovRadius(scan.geometry);
  const reach = Math.min(grid.nx * grid.dx, grid.ny * grid.dy) / 2;
  if (method === 'prior' && reach < 1.2 * fov) {
    warnings.push(`the grid reaches only ${reach.toFixed(0)} mm from its centre, little beyond the measured FOV (radius ${fov.toFixed(0)} mm): the object outside the FOV is not reconstructed; give a grid (size, pixel) that covers the whole object`);
  }

  ws.reset();
  hooks.onProgress?.(0.05, 'setup');
  const supportF = Float32Array.from(support);
  const sart = await OsSart.create(ws, { ...problem, support: supportF }, hooks);
  const x = ws.alloc('image', grid.nx * grid.ny);
  const target = problem.target;
  const [k0, k1] = problem.measured;
  if (prior) {
    // Unmeasured channels are fitted to the forward projection of the prior.
    const start = prior.data.map((v, i) => v * support[i]);
    await ws.write(x, start);
    await sart.projector.forward(x, sart.corr);
    const priorSino = await ws.read(sart.corr);
    for (let q = 0; q < problem.nViews; q++) {
      target.set(priorSino.subarray(q * problem.nCh, q * problem.nCh + k0), q * problem.nCh);
      target.set(priorSino.subarray(q * problem.nCh + k1, (q + 1) * problem.nCh), q * problem.nCh + k1);
    }
    await ws.write(sart.target, target);
  } else {
    await ws.write(x, new Float32Array(grid.nx * grid.ny));
  }
  await sart.projector.forward(x, sart.corr);
  const startResidual = perViewSquares(await ws.read(sart.corr), target, problem.nCh, k0, k1).reduce((s, v) => s + v, 0);
  const measuredRays = problem.nViews * (k1 - k0);
  const t1 = now();

  const outcome = await solve({ ws, grid, sart, x, startResidual, measuredRays }, method, o, scaled(hooks, 0.06, 0.99));
  const t2 = now();

  await sart.projector.forward(x, sart.corr);
  const finalSino = await ws.read(sart.corr);
  const image = await ws.read(x);
  const perView = perViewSquares(finalSino, target, problem.nCh, k0, k1);
  const finalResidual = perView.reduce((s, v) => s + v, 0);
  const nMeasured = k1 - k0;
  const report: Record<string, unknown> = {
    method,
    options: { ...o, subsets },
    iterations: outcome.iterations,
    stoppedBy: outcome.stoppedBy,
    grid,
    extension: { left: problem.extension.left, right: problem.extension.right, channels: problem.nCh },
    history: outcome.history,
    residual: {
      startRms: Math.sqrt(startResidual / measuredRays),
      finalRms: Math.sqrt(finalResidual / measuredRays),
      finalRelative: startResidual > 0 ? Math.sqrt(finalResidual / startResidual) : 0,
      perViewRms: unpermute(perView.map((s) => Math.sqrt(s / nMeasured)), problem.plan.permutation),
    },
    timings: { setup: t1 - t0, iterations: t2 - t1, total: now() - t0 },
  };
  if (prior) {
    const unmeasured = problem.nCh - nMeasured;
    const away = perViewSquares(finalSino, target, problem.nCh, k0, k1, true);
    report.prior = {
      departure: departureFromPrior(image, prior.data, grid, support, fov, scan.muWater),
      unmeasuredPerViewRms: unpermute(away.map((s) => (unmeasured ? Math.sqrt(s / unmeasured) : 0)), problem.plan.permutation),
    };
  }
  hooks.onProgress?.(1, 'done');
  return { image: { grid, data: image, quantity: 'mu', muWater: scan.muWater, fovRadius: fov }, warnings, report };
}
