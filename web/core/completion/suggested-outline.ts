// The outline the data suggest: every view's edge analysis (truncation/edges.ts: where the data
// fall to air, or where the water cylinder fitted to a cut-off edge ends; Hsieh et al. 2004)
// gives a line the object touches, i.e. a sample of the object's support function
// h(phi) = max over the object of x cos(phi) + y sin(phi). An ellipse centred at c with shape
// matrix Q has h(phi) = c.u + sqrt(u^T Q u), u = (cos phi, sin phi): its centre is the first
// harmonic of h, and (h - c.u)^2 is linear in Q's three entries (least squares). The polygon is
// the intersection of the supporting half-planes at evenly spaced directions. The user compares
// it with the object and corrects it (`--outline ellipse:...`).
import { kernelKind, viewVectors } from '../geometry/view-vectors';
import type { Outline } from '../knowledge';
import { viewAngles } from '../recon/fbp-weights';
import type { EdgeAnalysis } from '../truncation/edges';

export interface SuggestedOutline {
  ellipse: Extract<Outline, { shape: 'ellipse' }>;
  polygon: Extract<Outline, { shape: 'polygon' }>;
  /** The ellipse as the command line writes it. */
  option: string;
  /** Supporting lines taken from cut-off edges (water cylinder reach) rather than from where the data fall to air. */
  estimatedShare: number;
}

/** Directions of the polygon's edges. */
const POLYGON_SIDES = 36;

/** Support samples (normal direction phi, distance h, from a cut-off edge or not). */
function supportSamples(a: EdgeAnalysis): { phi: number[]; h: number[]; estimated: number } {
  const beta = viewAngles(viewVectors(a.geometry), kernelKind(a.geometry));
  const phi: number[] = [], h: number[] = [];
  let estimated = 0;
  for (let v = 0; v < a.nViews; v++) {
    for (const side of [0, 1] as const) {
      const s = a.boundary[side][v];
      if (!Number.isFinite(s)) continue;
      const theta = beta[v] - a.rays.gamma(a.rays.u(s));
      // Parallel view theta measures s = x.n with n = (-sin theta, cos theta): the right boundary
      // bounds x.n from above (direction n), the left one from below (direction -n).
      phi.push(side === 1 ? theta + Math.PI / 2 : theta - Math.PI / 2);
      h.push(side === 1 ? s : -s);
      if (a.truncated[side][v]) estimated++;
    }
  }
  return { phi, h, estimated };
}

/** Least squares for a small system given its rows. */
function leastSquares(rows: number[][], rhs: number[]): number[] {
  const n = rows[0].length;
  const A = Array.from({ length: n }, () => new Array<number>(n + 1).fill(0));
  rows.forEach((r, i) => {
    for (let p = 0; p < n; p++) {
      for (let q = 0; q < n; q++) A[p][q] += r[p] * r[q];
      A[p][n] += r[p] * rhs[i];
    }
  });
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(A[r][c]) > Math.abs(A[p][c])) p = r;
    [A[c], A[p]] = [A[p], A[c]];
    for (let r = c + 1; r < n; r++) {
      const f = A[r][c] / A[c][c];
      for (let k = c; k <= n; k++) A[r][k] -= f * A[c][k];
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = A[r][n];
    for (let k = r + 1; k < n; k++) s -= A[r][k] * x[k];
    x[r] = s / A[r][r];
  }
  return x;
}

/** The ellipse whose support function fits the samples. */
export function ellipseFromSupport(phi: number[], h: number[]): Extract<Outline, { shape: 'ellipse' }> | null {
  if (phi.length < 6) return null;
  // Centre: the first harmonic (with a constant, since h of an ellipse is not zero-mean).
  const [, cx, cy] = leastSquares(phi.map((p) => [1, Math.cos(p), Math.sin(p)]), h);
  const w2 = phi.map((p, i) => Math.max(0, h[i] - cx * Math.cos(p) - cy * Math.sin(p)) ** 2);
  const [A, B, C2] = leastSquares(phi.map((p) => [Math.cos(p) ** 2, Math.sin(p) ** 2, 2 * Math.sin(p) * Math.cos(p)]), w2);
  // Eigen-decomposition of [[A, C2], [C2, B]].
  const mean = (A + B) / 2, dev = Math.hypot((A - B) / 2, C2);
  const l1 = mean + dev, l2 = mean - dev;
  if (!(l2 > 0)) return null;
  const angle = 0.5 * Math.atan2(2 * C2, A - B);
  return { shape: 'ellipse', cx, cy, a: Math.sqrt(l1), b: Math.sqrt(l2), angleDeg: (angle * 180) / Math.PI };
}

/** The polygon bounded by the supporting lines at POLYGON_SIDES evenly spaced directions (median of the samples near each). */
function polygonFromSupport(phi: number[], h: number[]): Extract<Outline, { shape: 'polygon' }> | null {
  const bins: number[][] = Array.from({ length: POLYGON_SIDES }, () => []);
  const width = (2 * Math.PI) / POLYGON_SIDES;
  phi.forEach((p, i) => {
    const b = ((Math.round(p / width) % POLYGON_SIDES) + POLYGON_SIDES) % POLYGON_SIDES;
    bins[b].push(h[i]);
  });
  if (bins.some((b) => !b.length)) return null;
  const d = bins.map((b) => b.sort((x, y) => x - y)[b.length >> 1]);
  const points: [number, number][] = [];
  for (let k = 0; k < POLYGON_SIDES; k++) {
    const a1 = k * width, a2 = (k + 1) * width, h1 = d[k], h2 = d[(k + 1) % POLYGON_SIDES];
    // Solve x cos a1 + y sin a1 = h1, x cos a2 + y sin a2 = h2.
    const det = Math.sin(a2 - a1);
    points.push([(h1 * Math.sin(a2) - h2 * Math.sin(a1)) / det, (h2 * Math.cos(a1) - h1 * Math.cos(a2)) / det]);
  }
  return { shape: 'polygon', points };
}

const mm = (v: number) => Number(v.toFixed(1));

/** The outline the edge analysis suggests, or null when the views do not go round the object. */
export function suggestedOutline(a: EdgeAnalysis): SuggestedOutline | null {
  const { phi, h, estimated } = supportSamples(a);
  const ellipse = ellipseFromSupport(phi, h);
  const polygon = polygonFromSupport(phi, h);
  if (!ellipse || !polygon) return null;
  const e = { ...ellipse, cx: mm(ellipse.cx), cy: mm(ellipse.cy), a: mm(ellipse.a), b: mm(ellipse.b), angleDeg: mm(ellipse.angleDeg ?? 0) };
  return {
    ellipse: e,
    polygon: { shape: 'polygon', points: polygon.points.map(([x, y]) => [mm(x), mm(y)]) },
    option: `ellipse:${e.cx},${e.cy},${e.a},${e.b},${e.angleDeg}`,
    estimatedShare: phi.length ? estimated / phi.length : 0,
  };
}
