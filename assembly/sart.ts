// Elementwise steps of SART and ordered-subsets SART (A. H. Andersen, A. C. Kak, "Simultaneous
// algebraic reconstruction technique (SART): a superior implementation of the ART algorithm",
// Ultrasonic Imaging 6:81-94, 1984). For a subset S of views, rays i and pixels j:
//   x_j <- x_j + lambda * [sum_{i in S} a_ij w_i (p_i - (A x)_i) / (A 1)_i] / [sum_{i in S} a_ij w_i]
// with w_i the data weight of ray i (0 for channels without data). The projector (joseph.ts)
// computes A x and the back-projection; these kernels do the rest, SIMD over flat f32 arrays.
import { ldf, stf } from './memory';

/**
 * SART normalizations for elements [from, to): out[i] = num[i] / sum[i] where sum[i] > minSum,
 * else 0. With row sums (A 1) and data weights it gives the ray weights; with column sums
 * (A_S^T w) and the support mask, the pixel weights (a ray or pixel that barely meets the
 * other side carries no update).
 */
export function sartWeights(sum: usize, num: usize, out: usize, from: i32, to: i32, minSum: f32): void {
  const lo = f32x4.splat(minSum);
  const zero = f32x4.splat(0);
  let i = from;
  for (; i + 4 <= to; i += 4) {
    const o = <usize>i << 2;
    const s = v128.load(sum + o);
    const keep = f32x4.gt(s, lo);
    // Where the sum is too small, divide by 1 and mask the result to 0.
    const q = f32x4.div(v128.load(num + o), v128.bitselect(s, f32x4.splat(1), keep));
    v128.store(out + o, v128.bitselect(q, zero, keep));
  }
  for (; i < to; i++) {
    const s = ldf(sum, i);
    stf(out, i, s > minSum ? ldf(num, i) / s : 0);
  }
}

/**
 * Turns projections into weighted corrections for views [view0, view1) of an nCh-channel
 * sinogram: c[i] = (target[i] - c[i]) * rayWeight[i], where c holds A x on entry. Writes, per
 * view v, the sum over channels [k0, k1) of (target - A x)^2 (the residual on the measured
 * channels) to viewSums[v] (f64), so totals do not depend on how views are split.
 */
export function sartCorrection(
  c: usize, target: usize, rayWeight: usize, nCh: i32, view0: i32, view1: i32, k0: i32, k1: i32, viewSums: usize,
): void {
  for (let v = view0; v < view1; v++) {
    const row = v * nCh;
    let acc = f32x4.splat(0);
    let k = k0;
    for (; k + 4 <= k1; k += 4) {
      const o = <usize>(row + k) << 2;
      const d = f32x4.sub(v128.load(target + o), v128.load(c + o));
      acc = f32x4.add(acc, f32x4.mul(d, d));
    }
    let s: f64 = <f64>(f32x4.extract_lane(acc, 0) + f32x4.extract_lane(acc, 1)) +
      <f64>(f32x4.extract_lane(acc, 2) + f32x4.extract_lane(acc, 3));
    for (; k < k1; k++) {
      const d = ldf(target, row + k) - ldf(c, row + k);
      s += <f64>(d * d);
    }
    store<f64>(viewSums + (<usize>v << 3), s);
  }
  const from = view0 * nCh;
  const to = view1 * nCh;
  let i = from;
  for (; i + 4 <= to; i += 4) {
    const o = <usize>i << 2;
    v128.store(c + o, f32x4.mul(f32x4.sub(v128.load(target + o), v128.load(c + o)), v128.load(rayWeight + o)));
  }
  for (; i < to; i++) stf(c, i, (ldf(target, i) - ldf(c, i)) * ldf(rayWeight, i));
}

/**
 * The SART image update for elements [from, to): x[j] = max(floor, x[j] + lambda *
 * pixelWeight[j] * back[j]), back = A_S^T c. floor = 0 enforces non-negativity; a large
 * negative floor leaves values free.
 */
export function sartUpdate(x: usize, back: usize, pixelWeight: usize, from: i32, to: i32, lambda: f32, floor: f32): void {
  const lv = f32x4.splat(lambda);
  const fv = f32x4.splat(floor);
  let i = from;
  for (; i + 4 <= to; i += 4) {
    const o = <usize>i << 2;
    const step = f32x4.mul(lv, f32x4.mul(v128.load(pixelWeight + o), v128.load(back + o)));
    v128.store(x + o, f32x4.max(fv, f32x4.add(v128.load(x + o), step)));
  }
  for (; i < to; i++) stf(x, i, max(floor, ldf(x, i) + lambda * ldf(pixelWeight, i) * ldf(back, i)));
}

/**
 * Per line l in [line0, line1) of `lineLength` elements: lineSums[l] = sum of (a - b)^2 over the
 * line, in f64 (image change norms; per line so totals do not depend on the split).
 */
export function squaredDistances(a: usize, b: usize, lineLength: i32, line0: i32, line1: i32, lineSums: usize): void {
  for (let l = line0; l < line1; l++) {
    const from = l * lineLength;
    const to = from + lineLength;
    let acc = f32x4.splat(0);
    let i = from;
    for (; i + 4 <= to; i += 4) {
      const o = <usize>i << 2;
      const d = f32x4.sub(v128.load(a + o), v128.load(b + o));
      acc = f32x4.add(acc, f32x4.mul(d, d));
    }
    let s: f64 = <f64>(f32x4.extract_lane(acc, 0) + f32x4.extract_lane(acc, 1)) +
      <f64>(f32x4.extract_lane(acc, 2) + f32x4.extract_lane(acc, 3));
    for (; i < to; i++) {
      const d = ldf(a, i) - ldf(b, i);
      s += <f64>(d * d);
    }
    store<f64>(lineSums + (<usize>l << 3), s);
  }
}

/** dst[i] = src[i] for i in [from, to). */
export function copyRange(dst: usize, src: usize, from: i32, to: i32): void {
  if (to > from) memory.copy(dst + (<usize>from << 2), src + (<usize>from << 2), <usize>(to - from) << 2);
}
