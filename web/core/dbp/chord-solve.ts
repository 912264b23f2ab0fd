// Finite Hilbert inversion on one chord, as regularized least squares: the object along a line
// from its Hilbert transform on the part of the line inside the measured field of view, the
// chord's measured line integral, and the mean values of known regions it crosses (Kudo,
// Courdurier, Noo & Defrise 2008: a known subinterval determines the interior; Defrise, Noo,
// Clackdoyle & Kudo 2006: the support; REFERENCES.md [kudo2008], [defrise2006]). This module
// builds one chord's normal equations; chords are coupled and solved in coupled-solve.ts.
//
// The profile is piecewise linear over nodes (zero beyond the first and last). The Hilbert
// transform is sampled midway between nodes: sampled at the nodes themselves, the odd kernel
// would cancel for the alternating profile (+1, -1, +1, ...) and leave it undetermined.

/** A weighted linear equation on the profile: coef . f = target. */
export interface ChordEquation {
  coef: Float64Array;
  target: number;
  weight: number;
}

/** One chord's data and knowledge; positions in mm along the chord, values in 1/mm. */
export interface ChordProblem {
  /** Nodes of the piecewise-linear profile, increasing. */
  nodes: Float64Array;
  /** Where the Hilbert transform was measured (DBP) and its values. */
  at: Float64Array;
  hilbert: Float32Array | Float64Array;
  /** The chord's measured line integral and the weight of its equation (against one Hilbert sample). */
  lineIntegral?: number;
  lineWeight: number;
  /** Further equations: the mean of a known region over the nodes it covers. */
  equations: ChordEquation[];
  /** Strength of the slope penalty int f'^2 outside the field of view. */
  smoothOutside: number;
  /**
   * An estimate of the profile outside the field of view (a value per node) and the weight (per
   * mm of chord, against one Hilbert sample) that draws the profile there toward it.
   */
  exterior?: { values: Float64Array; weight: number };
  /** Nodes [inside0, inside1) lie inside the field of view. */
  inside0: number;
  inside1: number;
}

/**
 * Fills `row` with the Hilbert transform at t, (1/pi) p.v. int f(s) / (t - s) ds, of the
 * profile per node value. A linear piece L on [p, q] gives L(t) ln|(t - p)/(t - q)| - (L(q) -
 * L(p)) (write L(s) = L(t) - slope (t - s); REFERENCES.md [hilbert-interval]). t must not be a node.
 */
export function hilbertRow(nodes: Float64Array, t: number, row: Float64Array): void {
  row.fill(0);
  const invPi = 1 / Math.PI;
  let lp = Math.log(Math.abs(t - nodes[0]));
  for (let j = 0; j + 1 < nodes.length; j++) {
    const p = nodes[j], q = nodes[j + 1];
    const lq = Math.log(Math.abs(t - q));
    const lg = (lp - lq) * invPi;
    const r = (t - p) / (q - p);
    row[j] += (1 - r) * lg + invPi;
    row[j + 1] += r * lg - invPi;
    lp = lq;
  }
}

/** Trapezoid weights: the integral of the piecewise-linear profile per node value. */
export function integralRow(nodes: Float64Array): Float64Array {
  const row = new Float64Array(nodes.length);
  for (let j = 0; j + 1 < nodes.length; j++) {
    const half = (nodes[j + 1] - nodes[j]) / 2;
    row[j] += half;
    row[j + 1] += half;
  }
  return row;
}

/** A chord's least-squares rows (weighted) and their targets: the data part of its normal equations. */
export interface ChordRows {
  /** count x n, row-major. */
  rows: Float64Array;
  targets: Float64Array;
  count: number;
}

/** The weighted rows of one chord: Hilbert samples, its line integral, the known-region means. */
export function chordRows(p: ChordProblem): ChordRows {
  const n = p.nodes.length;
  const count = p.at.length + (p.lineIntegral !== undefined ? 1 : 0) + p.equations.length;
  const rows = new Float64Array(count * n), targets = new Float64Array(count);
  const row = new Float64Array(n);
  let r = 0;
  const put = (coef: Float64Array, target: number, w: number) => {
    for (let j = 0; j < n; j++) rows[r * n + j] = w * coef[j];
    targets[r++] = w * target;
  };
  for (let i = 0; i < p.at.length; i++) {
    hilbertRow(p.nodes, p.at[i], row);
    put(row, p.hilbert[i], 1);
  }
  if (p.lineIntegral !== undefined) put(integralRow(p.nodes), p.lineIntegral, p.lineWeight);
  for (const e of p.equations) put(e.coef, e.target, e.weight);
  return { rows, targets, count };
}

/** G^T t for rows G (count x n) and targets t: the right-hand side of the normal equations. */
export function rowsTransposeTargets(c: ChordRows, n: number): Float64Array {
  const out = new Float64Array(n);
  for (let r = 0; r < c.count; r++) {
    const t = c.targets[r];
    if (t === 0) continue;
    for (let j = 0; j < n; j++) out[j] += c.rows[r * n + j] * t;
  }
  return out;
}

/**
 * The slope penalty outside the field of view as a band of the normal equations: sum (f_{j+1} -
 * f_j)^2 / (x_{j+1} - x_j) = int f'^2 adds w to (j, j) and (j+1, j+1) and -w to (j+1, j).
 */
export function outsideSlopeBand(p: ChordProblem, diag: Float64Array, sub: Float64Array): void {
  const n = p.nodes.length;
  for (let j = 0; j + 1 < n; j++) {
    if (j >= p.inside0 && j + 1 < p.inside1) continue;
    const w = p.smoothOutside / (p.nodes[j + 1] - p.nodes[j]);
    diag[j] += w;
    diag[j + 1] += w;
    sub[j] -= w;
  }
}

/** Length of chord a node stands for: half of each neighbouring interval, mm. */
function nodeLength(nodes: Float64Array, j: number): number {
  return ((j + 1 < nodes.length ? nodes[j + 1] - nodes[j] : 0) + (j > 0 ? nodes[j] - nodes[j - 1] : 0)) / 2;
}

/**
 * The pull toward the exterior estimate, weight * int (f - g)^2 over the chord outside the field
 * of view (node by node): weight * length on the diagonal, weight * length * g on the right-hand
 * side. No exterior estimate: nothing.
 */
export function exteriorPull(p: ChordProblem, diag: Float64Array, rhs: Float64Array): void {
  if (!p.exterior) return;
  const { values, weight } = p.exterior;
  for (let j = 0; j < p.nodes.length; j++) {
    if (j >= p.inside0 && j < p.inside1) continue;
    const w = weight * nodeLength(p.nodes, j);
    diag[j] += w;
    rhs[j] += w * values[j];
  }
}
