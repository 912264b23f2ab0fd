// The report of an iterative run (RecipeResult.report, printed by --json): convergence history,
// measured-data residual per view, and for the prior-guided method how far the result departs
// from the prior (image inside / outside the FOV, and projections on the unmeasured channels).
import { departureFromPrior, type NegativeValues } from './prior';
import { perViewSquares, type Problem } from './problem';
import type { IterativeMethod, IterativeOptions } from './options';
import type { SolveOutcome } from './solve';
import { unpermute } from './subsets';

export interface ReportInputs {
  method: IterativeMethod;
  options: IterativeOptions;
  problem: Problem;
  outcome: SolveOutcome;
  /** Squared measured residual of the start image. */
  startResidual: number;
  /** Projections of the result on the extended detector (permuted view order). */
  finalSino: Float32Array;
  image: Float32Array;
  /** The prior on the grid (prior-guided method). */
  prior?: Float32Array;
  /** Negative values of the prior, when it has some. */
  priorNegative?: NegativeValues;
  fov: number;
  muWater?: number;
}

/** JSON-ready report; per-view figures in the scan's view order. */
export function iterativeReport(r: ReportInputs): Record<string, unknown> {
  const { problem, finalSino } = r;
  const { nCh, rows, grid, support, plan, target } = problem;
  const [k0, k1] = problem.measured;
  const nMeasured = k1 - k0;
  const measuredRays = problem.nViews * rows * nMeasured;
  const perView = perViewSquares(finalSino, target, nCh, k0, k1, false, rows);
  const finalResidual = perView.reduce((s, v) => s + v, 0);
  const report: Record<string, unknown> = {
    method: r.method,
    options: r.options,
    iterations: r.outcome.iterations,
    stoppedBy: r.outcome.stoppedBy,
    grid,
    extension: { left: problem.extension.left, right: problem.extension.right, channels: nCh },
    history: r.outcome.history,
    // Dimensionless series for a convergence plot (the page plots report.convergence).
    convergence: {
      'residual (fraction of start)': r.outcome.history.residual,
      'TV (fraction of first iteration)': r.outcome.history.tv.map((v) => v / (r.outcome.history.tv[0] || 1)),
    },
    residual: {
      /** RMS over measured rays, line-integral units. */
      startRms: Math.sqrt(r.startResidual / measuredRays),
      finalRms: Math.sqrt(finalResidual / measuredRays),
      finalRelative: r.startResidual > 0 ? Math.sqrt(finalResidual / r.startResidual) : 0,
      perViewRms: unpermute(perView.map((s) => Math.sqrt(s / (rows * nMeasured))), plan.permutation),
    },
  };
  if (r.prior) {
    const unmeasured = nCh - nMeasured;
    const away = perViewSquares(finalSino, target, nCh, k0, k1, true, rows);
    report.prior = {
      departure: departureFromPrior(r.image, r.prior, grid, support, r.fov, r.muWater),
      unmeasuredPerViewRms: unpermute(away.map((s) => (unmeasured ? Math.sqrt(s / (rows * unmeasured)) : 0)), plan.permutation),
      negative: r.priorNegative ?? null,
    };
  }
  return report;
}
