// Detector tails in the parallel domain: for every parallel view and side, the values beyond the
// measured edge of a base extension (water cylinder, edge, mirror, cosine; truncation/extend-
// methods.ts, planned and evaluated exactly as FBP would on a parallel scan), and a stretch per
// view and side that the knowledge sets. A stretch a turns the base tail t0 into
// t(delta) = t0(delta / a): it keeps the value at the edge (continuity) and scales the tail's
// area by a and its first moment about the edge by a^2.
import type { Workspace } from '../engine/workspace';
import type { ExtendMethod } from '../truncation/extend-methods';
import { extendScan } from '../truncation/extend-scan';
import { extendedLayout, planExtension, type ExtensionSummary } from '../truncation/extension-plan';
import { parallelScan, type ParallelDomain } from './parallel-domain';

export interface DomainTails {
  /** Samples per tail: value at delta = q ds (mm beyond the edge channel), q = 1 .. nq. */
  nq: number;
  /** Base tail values, [view][side][q - 1]; side 0 left (s < 0), 1 right. */
  values: Float32Array;
  /** The measured edge value per view and side (delta = 0), [view][side]. */
  edge: Float32Array;
  /** Stretch per view and side (1: the base tail), [view][side]. */
  stretch: Float64Array;
  /** Area of each base tail (mm) and its first moment about the edge (mm^2), [view][side]. */
  area: Float64Array;
  moment: Float64Array;
  /** The base extension's plan summary (method, source, tail lengths). */
  summary: ExtensionSummary;
}

/** The base tails of `method` for every view and side of the domain. */
export async function baseTails(ws: Workspace, pd: ParallelDomain, method: Exclude<ExtendMethod, 'none'>, muWater?: number): Promise<DomainTails> {
  const scan = parallelScan(pd, muWater);
  const plan = planExtension(scan, method);
  const longest = Math.max(...plan.lengths[0], ...plan.lengths[1], pd.ds);
  const nq = Math.ceil(longest / pd.ds) + 2;
  const { geometry, coord } = extendedLayout(scan.geometry, nq, nq);
  const extended = await extendScan(ws, scan, { ...plan, left: nq, right: nq, coord, geometry });
  const n = 2 * pd.half + 1, nE = n + 2 * nq;
  const values = new Float32Array(pd.nViews * 2 * nq);
  const edge = new Float32Array(pd.nViews * 2);
  for (let j = 0; j < pd.nViews; j++) {
    const row = extended.data.subarray(j * nE, (j + 1) * nE);
    for (let q = 1; q <= nq; q++) {
      values[(2 * j) * nq + q - 1] = Math.max(0, row[nq - q]);
      values[(2 * j + 1) * nq + q - 1] = Math.max(0, row[nq + n - 1 + q]);
    }
    edge[2 * j] = pd.data[j * n];
    edge[2 * j + 1] = pd.data[j * n + n - 1];
  }
  const t: DomainTails = {
    nq, values, edge, stretch: new Float64Array(pd.nViews * 2).fill(1), area: new Float64Array(pd.nViews * 2), moment: new Float64Array(pd.nViews * 2), summary: plan.summary,
  };
  for (let i = 0; i < 2 * pd.nViews; i++) {
    let a = 0, m = 0;
    for (let q = 1; q <= nq; q++) {
      const v = values[i * nq + q - 1];
      a += v * pd.ds;
      m += v * q * pd.ds * pd.ds;
    }
    t.area[i] = a;
    t.moment[i] = m;
  }
  return t;
}

/** Value of the stretched tail of view j, side `side`, at delta mm beyond the edge. */
export function tailValue(t: DomainTails, ds: number, j: number, side: 0 | 1, delta: number): number {
  const i = 2 * j + side;
  const a = t.stretch[i];
  if (!(a > 0) || !(delta > 0)) return delta > 0 ? 0 : t.edge[i];
  const f = delta / (a * ds); // in samples; sample q sits at f = q
  if (f >= t.nq) return 0;
  const q0 = Math.floor(f), w = f - q0;
  const v0 = q0 === 0 ? t.edge[i] : t.values[i * t.nq + q0 - 1];
  const v1 = q0 + 1 <= t.nq ? t.values[i * t.nq + q0] : 0;
  return (1 - w) * v0 + w * v1;
}

/** Reach of each stretched tail (where it falls to zero), mm beyond the edge, [view][side]. */
export function tailReach(t: DomainTails, ds: number): Float64Array {
  const out = new Float64Array(t.stretch.length);
  for (let i = 0; i < out.length; i++) {
    let last = 0;
    for (let q = 1; q <= t.nq; q++) if (t.values[i * t.nq + q - 1] > 0) last = q;
    out[i] = t.stretch[i] * last * ds;
  }
  return out;
}
