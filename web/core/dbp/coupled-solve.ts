// All chords of a family solved together. Each chord alone determines its profile inside the
// field of view only up to smooth drifts that grow away from the known region (the interior
// problem is stable near the known region, less so far from it: Courdurier, Noo, Defrise & Kudo
// 2008, REFERENCES.md [courdurier2008]); chords solved one by one drift independently and show
// as streaks fanning out from the known region. So neighbouring chords are tied together at
// equal distance from the centre, and the profile along each chord is kept piecewise smooth:
// an edge-preserving penalty on both differences (total variation, which makes the interior
// problem stable for piecewise-constant objects: Yu & Wang 2009, [yu-wang2009]), minimized by
// iteratively reweighted least squares (lagged diffusivity: Vogel & Oman 1996, [vogel-oman1996]).
// Each reweighted system is solved by conjugate gradients preconditioned with every chord's own
// Cholesky factor (block Jacobi; Saad 2003, [saad2003]).
import { throwIfCancelled } from '../errors';
import type { RunHooks } from '../run-hooks';
import type { ChordFamily } from './chords';
import type { Workspace } from '../engine/workspace';
import { ChordBlocks } from './chord-blocks';
import { chordRows, exteriorPull, outsideSlopeBand, rowsTransposeTargets, type ChordProblem } from './chord-solve';

export interface CouplingOptions {
  /** Tie between neighbouring chords (dimensionless; per arc length between them). */
  across: number;
  /** Slope penalty along each chord inside the field of view (per step). */
  along: number;
  /** Differences well above this (1/mm) count as edges and are penalized less; 0: quadratic only. */
  edge: number;
  /** Reweighting passes (1: quadratic penalties only). */
  passes: number;
  /** Conjugate-gradient stop: residual below this share of its start, or maxIterations. */
  tolerance: number;
  maxIterations: number;
}

export interface CoupledResult {
  /** Node values per chord. */
  profiles: Float64Array[];
  /** Conjugate-gradient iterations per pass and the final relative residual of each. */
  iterations: number[];
  residuals: number[];
}

/** Index pairs (global unknowns) with a base weight. */
interface Ties {
  a: Int32Array;
  b: Int32Array;
  w: Float64Array;
}

/** Neighbouring chords' inside nodes at the same distance from the centre (the last chord meets the first reversed). */
function acrossTies(f: ChordFamily, offsets: Int32Array, strength: number): Ties {
  const a: number[] = [], b: number[] = [], w: number[] = [];
  const dPsi = Math.PI / f.count;
  // A single chord has no neighbour (the last chord meets the first reversed only in a family).
  for (let m = 0; f.count > 1 && m < f.count; m++) {
    const next = (m + 1) % f.count, flip = m + 1 === f.count ? -1 : 1;
    const c = f.chords[m], d = f.chords[next];
    for (let j = c.inside0; j < c.inside1; j++) {
      const k = c.k0 + (j - c.inside0);
      const jd = flip * k - d.k0 + d.inside0;
      if (jd < d.inside0 || jd >= d.inside1) continue;
      // Weight per arc length between the two nodes (at least half a step near the centre).
      const arc = Math.max(Math.abs(k) * f.step * dPsi, f.step / 2);
      a.push(offsets[m] + j);
      b.push(offsets[next] + jd);
      w.push((strength * f.step) / arc);
    }
  }
  return { a: Int32Array.from(a), b: Int32Array.from(b), w: Float64Array.from(w) };
}

/** Neighbouring inside nodes along each chord. */
function alongTies(f: ChordFamily, offsets: Int32Array, strength: number): Ties {
  const a: number[] = [], b: number[] = [];
  f.chords.forEach((c, m) => {
    for (let j = c.inside0; j + 1 < c.inside1; j++) {
      a.push(offsets[m] + j);
      b.push(offsets[m] + j + 1);
    }
  });
  return { a: Int32Array.from(a), b: Int32Array.from(b), w: new Float64Array(a.length).fill(strength / f.step) };
}

/** Edge-preserving reweighting: eps / sqrt(d^2 + eps^2) of the base weight (1 for small differences). */
function reweight(t: Ties, x: Float64Array, eps: number, out: Float64Array): void {
  for (let q = 0; q < t.a.length; q++) {
    const d = x[t.a[q]] - x[t.b[q]];
    out[q] = eps > 0 ? (t.w[q] * eps) / Math.sqrt(d * d + eps * eps) : t.w[q];
  }
}

/** y += L x for the graph Laplacian of weighted ties. */
function addTies(t: Ties, w: Float64Array, x: Float64Array, y: Float64Array): void {
  for (let q = 0; q < t.a.length; q++) {
    const a = t.a[q], b = t.b[q], d = w[q] * (x[a] - x[b]);
    y[a] += d;
    y[b] -= d;
  }
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/** Adds the within-chord part of ties (diagonal, and the along-chord neighbour) to a band. */
function addTiesToBand(t: Ties, w: Float64Array, diag: Float64Array, sub: Float64Array): void {
  for (let q = 0; q < t.a.length; q++) {
    diag[t.a[q]] += w[q];
    diag[t.b[q]] += w[q];
    if (t.b[q] === t.a[q] + 1) sub[t.a[q]] -= w[q];
  }
}

/** y -= band x (symmetric band: diag and first sub-diagonal; sub[i] couples i and i+1 within a chord). */
function subtractBand(diag: Float64Array, sub: Float64Array, x: Float64Array, y: Float64Array): void {
  for (let i = 0; i < x.length; i++) {
    y[i] -= diag[i] * x[i];
    if (sub[i] !== 0) { y[i] -= sub[i] * x[i + 1]; y[i + 1] -= sub[i] * x[i]; }
  }
}

/**
 * Solves all chords of `family` together: `problemOf(m)` gives chord m's rows and its own band
 * (outside slope penalty), the ties are added here.
 */
export async function solveCoupled(ws: Workspace, family: ChordFamily, problemOf: (m: number) => ChordProblem, o: CouplingOptions, hooks: RunHooks = {}): Promise<CoupledResult> {
  const sizes = family.chords.map((c) => c.nodes.length);
  const maxRows = Math.max(...family.chords.map((c) => c.at.length)) + 1 + 64;
  const blocks = new ChordBlocks(ws, sizes, maxRows);
  const offsets = blocks.offsets, total = blocks.total;
  const rhs = new Float64Array(total);
  const ownBand = { diag: new Float64Array(total), sub: new Float64Array(total) };
  await blocks.build((m) => {
    const p = problemOf(m);
    const rows = chordRows(p);
    rhs.set(rowsTransposeTargets(rows, sizes[m]), offsets[m]);
    outsideSlopeBand(p, ownBand.diag.subarray(offsets[m]), ownBand.sub.subarray(offsets[m]));
    exteriorPull(p, ownBand.diag.subarray(offsets[m]), rhs.subarray(offsets[m]));
    return rows;
  }, (done) => { throwIfCancelled(hooks.signal); hooks.onProgress?.((0.3 * done) / sizes.length, 'chord equations'); });

  const across = acrossTies(family, offsets, o.across), along = alongTies(family, offsets, o.along);
  const wAcross = Float64Array.from(across.w), wAlong = Float64Array.from(along.w);
  // Each block holds its own equations plus its share of the quadratic ties (the preconditioner
  // of every pass); products with the system subtract that share again and add the current ties.
  const tieBand = { diag: new Float64Array(total), sub: new Float64Array(total) };
  addTiesToBand(along, wAlong, tieBand.diag, tieBand.sub);
  for (let q = 0; q < across.a.length; q++) { tieBand.diag[across.a[q]] += wAcross[q]; tieBand.diag[across.b[q]] += wAcross[q]; }
  await blocks.addBandAndFactor(ownBand.diag.map((v, i) => v + tieBand.diag[i]), ownBand.sub.map((v, i) => v + tieBand.sub[i]));
  hooks.onProgress?.(0.4, 'factor chords');

  const multiply = async (x: Float64Array): Promise<Float64Array> => {
    const y = await blocks.multiply(x);
    subtractBand(tieBand.diag, tieBand.sub, x, y);
    addTies(across, wAcross, x, y);
    addTies(along, wAlong, x, y);
    return y;
  };

  const x = new Float64Array(total);
  const iterations: number[] = [], residuals: number[] = [];
  for (let pass = 0; pass < o.passes; pass++) {
    throwIfCancelled(hooks.signal);
    if (pass > 0 && o.edge > 0) {
      reweight(across, x, o.edge, wAcross);
      reweight(along, x, o.edge, wAlong);
    }
    const q0 = await multiply(x);
    const r = rhs.map((v, i) => v - q0[i]);
    const r0 = Math.sqrt(dot(r, r));
    let z = await blocks.solve(r);
    const p = Float64Array.from(z);
    let rz = dot(r, z), it = 0, rel = r0 > 0 ? 1 : 0;
    while (it < o.maxIterations && rel > o.tolerance) {
      const q = await multiply(p);
      const alpha = rz / dot(p, q);
      for (let i = 0; i < total; i++) { x[i] += alpha * p[i]; r[i] -= alpha * q[i]; }
      rel = Math.sqrt(dot(r, r)) / r0;
      it++;
      if (rel <= o.tolerance) break;
      z = await blocks.solve(r);
      const rz2 = dot(r, z);
      const beta = rz2 / rz;
      for (let i = 0; i < total; i++) p[i] = z[i] + beta * p[i];
      rz = rz2;
      if (it % 10 === 0) throwIfCancelled(hooks.signal);
    }
    iterations.push(it);
    residuals.push(rel);
    hooks.onProgress?.(0.4 + (0.6 * (pass + 1)) / o.passes, 'solve chords');
  }
  return { profiles: sizes.map((n, m) => x.slice(offsets[m], offsets[m] + n)), iterations, residuals };
}
