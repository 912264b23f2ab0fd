// Ordered subsets of views (H. M. Hudson, R. S. Larkin, "Accelerated image reconstruction using
// ordered subsets of projection data", IEEE TMI 13(4):601-609, 1994, applied to SART). Views
// are permuted once at setup so that each subset is a contiguous range of the permuted scan;
// the projector then works on view ranges.
import type { Geometry } from '../geometry/types';
import { viewCount } from '../geometry/types';

/** The subsets of a permuted scan: views [starts[q], starts[q+1]) form subset q. */
export interface SubsetPlan {
  /** permutation[q] = original index of permuted view q. */
  permutation: Int32Array;
  /** Start of each subset in permuted order, plus the total view count at the end. */
  starts: Int32Array;
}

/**
 * Order in which subsets are visited: bit-reversed indices (0, S/2, S/4, 3S/4, ...), skipping
 * those >= S, so that consecutive subsets lie far apart in angle (common practice for OS
 * methods, after Herman & Meyer's "efficient ordering", IEEE TMI 12(3), 1993; from memory).
 */
export function subsetOrder(subsets: number): number[] {
  let bits = 0;
  while (1 << bits < subsets) bits++;
  const out: number[] = [];
  for (let i = 0; i < 1 << bits; i++) {
    let r = 0;
    for (let b = 0; b < bits; b++) if (i & (1 << b)) r |= 1 << (bits - 1 - b);
    if (r < subsets) out.push(r);
  }
  return out;
}

/**
 * Interleaved subsets: subset s holds views s, s + S, s + 2S, ... (each spans the whole
 * angular range). Subsets are laid out in subsetOrder.
 */
export function planSubsets(nViews: number, subsets: number): SubsetPlan {
  if (!Number.isInteger(subsets) || subsets < 1 || subsets > nViews) {
    throw new RangeError(`subsets: got ${subsets}, expected 1 to ${nViews}`);
  }
  const permutation = new Int32Array(nViews);
  const starts = new Int32Array(subsets + 1);
  let q = 0;
  subsetOrder(subsets).forEach((s, k) => {
    starts[k] = q;
    for (let v = s; v < nViews; v += subsets) permutation[q++] = v;
  });
  starts[subsets] = nViews;
  return { permutation, starts };
}

/** The geometry with its views in permuted order (angles or calibrated vectors). */
export function permuteGeometry(g: Geometry, permutation: Int32Array): Geometry {
  if (permutation.length !== viewCount(g)) throw new RangeError(`permutation of ${permutation.length} views for ${viewCount(g)}`);
  const out: Geometry = { ...g };
  if (g.views) out.views = Array.from(permutation, (v) => g.views![v]);
  const a = g.anglesDeg;
  if (a) out.anglesDeg = Array.from(permutation, (v) => (Array.isArray(a) ? a[v] : a.start + v * a.step));
  return out;
}

/** Rows of a [view][channel] array in permuted order. */
export function permuteRows(data: Float32Array, nCh: number, permutation: Int32Array): Float32Array {
  const out = new Float32Array(permutation.length * nCh);
  permutation.forEach((v, q) => { out.set(data.subarray(v * nCh, (v + 1) * nCh), q * nCh); });
  return out;
}

/** Inverse of permuteRows for per-view values: out[permutation[q]] = values[q]. */
export function unpermute(values: ArrayLike<number>, permutation: Int32Array): number[] {
  const out = new Array<number>(permutation.length);
  permutation.forEach((v, q) => { out[v] = values[q]; });
  return out;
}
