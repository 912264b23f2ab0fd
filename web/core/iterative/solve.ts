// The outer iteration. SART: OS-SART sweeps with non-negativity. TV and reweighted TV: ASD-POCS
// (E. Y. Sidky, X. Pan, Phys. Med. Biol. 53(17):4777-4807, 2008): a data sweep, positivity,
// then N steepest-descent steps of length dtvg on the TV; dtvg is shortened by alpha_red
// whenever the TV phase moved the image more than r_max times the data step's change dp while
// the data residual is above tolerance; the relaxation shrinks by beta_red each iteration.
// Sidky & Pan start with dtvg = alpha dp of the first iteration, which from a zero image is
// alpha |f_1|. We use alpha |f_1| for every start image: from a prior the first data step is
// small and dp would leave the TV phase too weak to remove the prior's false detail.
import type { Buf, Workspace } from '../engine/workspace';
import type { RunHooks } from '../run-hooks';
import type { IterativeMethod, IterativeOptions } from './options';
import type { OsSart } from './os-sart';
import { TvDescent } from './tv-descent';
import { gridBands, gridSize, type ReconGrid } from './space';

/** ASD-POCS step control constants (Sidky & Pan 2008, from memory; REFERENCES.md [sidky-pan-2008]). */
export const ASD_POCS = { rMax: 0.95, alphaRed: 0.95, betaRed: 0.995 } as const;

export interface IterationHistory {
  /** Measured-data residual norm seen during each sweep, as a fraction of the starting residual. */
  residual: number[];
  /** RMS of that residual per measured ray (line-integral units). */
  residualRms: number[];
  /** Plain total variation of the image after each iteration, 1/mm summed over pixels. */
  tv: number[];
  /** TV step length per iteration (TV methods), image-norm units. */
  tvStep: number[];
}

export interface SolveOutcome {
  iterations: number;
  stoppedBy: 'iterations' | 'tolerance';
  history: IterationHistory;
}

export interface SolveContext {
  ws: Workspace;
  grid: ReconGrid;
  sart: OsSart;
  /** The image, updated in place; holds the start image on entry. */
  x: Buf;
  /** Squared measured residual of the start image, and how many measured rays there are. */
  startResidual: number;
  measuredRays: number;
}

/** Runs the iterations of `method` on ctx.x. Progress per subset step; cancellable between steps. */
export async function solve(ctx: SolveContext, method: IterativeMethod, o: IterativeOptions, hooks: RunHooks = {}): Promise<SolveOutcome> {
  const { ws, grid, sart, x } = ctx;
  const useTv = method !== 'sart';
  const weighted = method === 'wtv' || method === 'prior';
  const tv = await TvDescent.create(ws, grid, sart.support);
  const rows = gridBands(ws, grid);
  const before = useTv ? ws.alloc('dataStepStart', gridSize(grid)) : undefined;
  const floor = o.nonNegative ? 0 : -3.4e38;
  const start = Math.sqrt(ctx.startResidual);
  const history: IterationHistory = { residual: [], residualRms: [], tv: [], tvStep: [] };
  let lambda = o.relaxation;
  let tvStep = 0;
  let stoppedBy: SolveOutcome['stoppedBy'] = 'iterations';
  let k = 0;
  while (k < o.iterations) {
    const label = `iteration ${k + 1}/${o.iterations}`;
    if (weighted) await tv.refreshWeights(x, o.tvEps);
    if (before) await rows.copy(before, x);
    const onStep = (q: number) => hooks.onProgress?.((k + (q + 1) / sart.subsets) / o.iterations, label);
    const res2 = await sart.sweep(x, lambda, floor, hooks, onStep);
    const relative = start > 0 ? Math.sqrt(res2) / start : 0;
    if (useTv) {
      const dp = await rows.distance(x, before!);
      if (k === 0) tvStep = o.tvStrength * (await rows.norm(x));
      const dg = await tv.descend(x, o.tvSteps, tvStep, hooks.signal);
      history.tvStep.push(tvStep);
      if (dg > ASD_POCS.rMax * dp && relative > o.tolerance) tvStep *= ASD_POCS.alphaRed;
      lambda *= ASD_POCS.betaRed;
    }
    history.residual.push(relative);
    history.residualRms.push(Math.sqrt(res2 / Math.max(1, ctx.measuredRays)));
    history.tv.push(await tv.value(x));
    k++;
    if (o.tolerance > 0 && relative <= o.tolerance) {
      stoppedBy = 'tolerance';
      break;
    }
  }
  return { iterations: k, stoppedBy, history };
}
