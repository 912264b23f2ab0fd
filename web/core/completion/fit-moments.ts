// Fitting the object's moments (mass, centroid) to the known regions: the interior problem
// leaves the truncated data blind to a few smooth components inside the field of view (Kudo,
// Courdurier, Noo & Defrise 2008, REFERENCES.md [kudo2008]: a known subregion makes the
// solution unique); here they are the mass and centroid that set every view's tails (stretch.ts).
// One or two regions fix the mass (their values depend on it most); three or more also the
// centroid. Gauss-Newton on (values - known) / 1 HU with a weak pull towards the prior moments
// (mass 25%, centroid 15 mm: common practice for a regularised fit) and numeric derivatives.
import { throwIfCancelled } from '../errors';
import type { ObjectMoments } from './moments';

export interface MomentFit {
  moments: ObjectMoments;
  /** What was fitted: the mass only, or the mass and the centroid. */
  fitted: 'mass' | 'mass and centroid';
  iterations: number;
  /** Region values (mu, 1/mm) at the fitted moments. */
  values: number[];
}

type Evaluate = (o: ObjectMoments) => Promise<number[]>;

/** Regions needed to fit the centroid besides the mass. */
export const CENTROID_REGIONS = 3;

const MASS_PRIOR = 0.25;
/** The fitted mass stays within these factors of the prior's (the tails' stretch is capped as well). */
const MASS_RANGE = [0.25, 4];
const CENTROID_PRIOR_MM = 15;
const MAX_ITERATIONS = 8;

/** Solves the small normal equations (Gaussian elimination with partial pivoting). */
function solveSmall(A: number[][], b: number[]): number[] {
  const n = b.length;
  const M = A.map((row, i) => [...row, b[i]]);
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(M[r][c]) > Math.abs(M[p][c])) p = r;
    [M[c], M[p]] = [M[p], M[c]];
    for (let r = c + 1; r < n; r++) {
      const f = M[r][c] / M[c][c];
      for (let k = c; k <= n; k++) M[r][k] -= f * M[c][k];
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = M[r][n];
    for (let k = r + 1; k < n; k++) s -= M[r][k] * x[k];
    x[r] = s / M[r][r];
  }
  return x;
}

/**
 * Moments whose tails make the regions read `targets` (mu, 1/mm), starting from `prior`.
 * `muWater` sets the value scale (1 HU = muWater / 1000); `centroid` fits the centroid too
 * (default: with CENTROID_REGIONS regions or more).
 */
export async function fitMomentsToRegions(evaluate: Evaluate, targets: number[], prior: ObjectMoments, muWater: number, signal?: AbortSignal, centroid = targets.length >= CENTROID_REGIONS): Promise<MomentFit> {
  const withCentroid = centroid;
  const hu = muWater / 1000;
  // Parameters: mass relative to the prior's, centroid in mm.
  const toMoments = (p: number[]): ObjectMoments => ({
    mass: prior.mass * Math.min(MASS_RANGE[1], Math.max(MASS_RANGE[0], p[0])),
    cx: withCentroid ? p[1] : prior.cx,
    cy: withCentroid ? p[2] : prior.cy,
  });
  const priorP = withCentroid ? [1, prior.cx, prior.cy] : [1];
  const priorSd = withCentroid ? [MASS_PRIOR, CENTROID_PRIOR_MM, CENTROID_PRIOR_MM] : [MASS_PRIOR];
  const steps = withCentroid ? [0.01, 2, 2] : [0.01];
  let p = [...priorP];
  let values = await evaluate(toMoments(p));
  let iterations = 0;
  for (; iterations < MAX_ITERATIONS; iterations++) {
    throwIfCancelled(signal);
    const r = values.map((v, i) => (v - targets[i]) / hu);
    const J: number[][] = [];
    for (let k = 0; k < p.length; k++) {
      const q = [...p];
      q[k] += steps[k];
      const v2 = await evaluate(toMoments(q));
      J.push(v2.map((v, i) => (v - values[i]) / hu / steps[k]));
    }
    // Normal equations of the region residuals plus the prior: (J^T J + P) d = -(J^T r + P (p - p0)).
    const n = p.length;
    const A = Array.from({ length: n }, (_, a) => Array.from({ length: n }, (_, b) => J[a].reduce((s, _v, i) => s + J[a][i] * J[b][i], 0) + (a === b ? 1 / priorSd[a] ** 2 : 0)));
    const g = Array.from({ length: n }, (_, a) => -(J[a].reduce((s, _v, i) => s + J[a][i] * r[i], 0) + (p[a] - priorP[a]) / priorSd[a] ** 2));
    const d = solveSmall(A, g);
    p = p.map((x, k) => x + d[k]);
    p[0] = Math.min(MASS_RANGE[1], Math.max(MASS_RANGE[0], p[0]));
    values = await evaluate(toMoments(p));
    const moved = d.reduce((m, x, k) => Math.max(m, Math.abs(x) / steps[k]), 0);
    if (moved < 0.05) { iterations++; break; }
  }
  return { moments: toMoments(p), fitted: withCentroid ? 'mass and centroid' : 'mass', iterations, values };
}
