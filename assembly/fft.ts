// Radix-2 complex FFT on split real/imaginary f32 arrays, and FFT-based row filtering.
// Cooley & Tukey (1965). The forward transform is decimation in time (input in bit-reversed
// order, output natural); the transform that undoes it is decimation in frequency (input
// natural, output bit-reversed). Row filtering scatters each row into bit-reversed order as it
// loads it and gathers the result in natural order as it stores it, so no permutation pass is
// needed. The first two (DIT) or last two (DIF) stages run as one radix-4 step on four complex
// numbers per SIMD vector; the other stages run four butterflies per SIMD step.
import { ldf, stf, ldi, sti } from './memory';

/**
 * Fills the twiddle and bit-reversal tables for an n-point FFT (n a power of two, n >= 4).
 * Twiddles: for each stage of half-length h (1, 2, 4, ..., n/2), h factors exp(-i*pi*j/h),
 * stored at offset h-1 (n-1 entries in all) in twRe / twIm. bitrev holds n i32.
 */
export function fftPrepare(n: i32, twRe: usize, twIm: usize, bitrev: usize): void {
  for (let h = 1; h < n; h <<= 1) {
    for (let j = 0; j < h; j++) {
      const a = (-Math.PI * <f64>j) / <f64>h;
      stf(twRe, h - 1 + j, <f32>Math.cos(a));
      stf(twIm, h - 1 + j, <f32>Math.sin(a));
    }
  }
  let bits = 0;
  while ((1 << bits) < n) bits++;
  for (let i = 0; i < n; i++) {
    let r = 0;
    for (let b = 0; b < bits; b++) if ((i >> b) & 1) r |= 1 << (bits - 1 - b);
    sti(bitrev, i, r);
  }
}

/** In-place forward FFT (sign -1, unnormalized) of re + i*im in natural order, n >= 4 a power of two. */
export function fft(re: usize, im: usize, n: i32, twRe: usize, twIm: usize, bitrev: usize): void {
  for (let i = 0; i < n; i++) {
    const j = ldi(bitrev, i);
    if (j > i) {
      const tr = ldf(re, i); stf(re, i, ldf(re, j)); stf(re, j, tr);
      const ti = ldf(im, i); stf(im, i, ldf(im, j)); stf(im, j, ti);
    }
  }
  ditStages(re, im, n, twRe, twIm);
}

/**
 * Decimation-in-time stages on bit-reversed input: natural-order DFT out. The stages of
 * half-length 1 and 2 together are a radix-4 butterfly on each group of four (twiddles 1 and
 * -i), done within the SIMD vectors.
 */
function ditStages(re: usize, im: usize, n: i32, twRe: usize, twIm: usize): void {
  const alt = f32x4(1, -1, 1, -1);
  const half = f32x4(1, 1, -1, -1);
  const cross = f32x4(1, -1, -1, 1);
  for (let k: usize = 0; k < (<usize>n << 2); k += 16) {
    let a = v128.load(re + k), b = v128.load(im + k);
    // h = 1: (x0 + x1, x0 - x1, x2 + x3, x2 - x3)
    a = f32x4.add(v128.shuffle<f32>(a, a, 0, 0, 2, 2), f32x4.mul(v128.shuffle<f32>(a, a, 1, 1, 3, 3), alt));
    b = f32x4.add(v128.shuffle<f32>(b, b, 0, 0, 2, 2), f32x4.mul(v128.shuffle<f32>(b, b, 1, 1, 3, 3), alt));
    // h = 2, twiddles (1, -i): y0 +- y2, y1 +- (-i) y3 with (-i)(c + id) = d - ic.
    const ra = f32x4.add(v128.shuffle<f32>(a, a, 0, 1, 0, 1), f32x4.mul(v128.shuffle<f32>(a, b, 2, 7, 2, 7), half));
    const ib = f32x4.add(v128.shuffle<f32>(b, b, 0, 1, 0, 1), f32x4.mul(v128.shuffle<f32>(b, a, 2, 7, 2, 7), cross));
    v128.store(re + k, ra);
    v128.store(im + k, ib);
  }
  for (let h = 4; h < n; h <<= 1) {
    const tw = twRe + (<usize>(h - 1) << 2);
    const twi = twIm + (<usize>(h - 1) << 2);
    const hb = <usize>h << 2;
    for (let s = 0; s < n; s += h << 1) {
      const pr = re + (<usize>s << 2);
      const pi = im + (<usize>s << 2);
      for (let j: usize = 0; j < hb; j += 16) {
        const wr = v128.load(tw + j), wi = v128.load(twi + j);
        const br = v128.load(pr + hb + j), bi = v128.load(pi + hb + j);
        const tr = f32x4.sub(f32x4.mul(br, wr), f32x4.mul(bi, wi));
        const ti = f32x4.add(f32x4.mul(br, wi), f32x4.mul(bi, wr));
        const ar = v128.load(pr + j), ai = v128.load(pi + j);
        v128.store(pr + j, f32x4.add(ar, tr));
        v128.store(pi + j, f32x4.add(ai, ti));
        v128.store(pr + hb + j, f32x4.sub(ar, tr));
        v128.store(pi + hb + j, f32x4.sub(ai, ti));
      }
    }
  }
}

/**
 * Decimation-in-frequency stages (the same transform as ditStages): natural-order input,
 * DFT out in bit-reversed order. Butterfly a' = a + b, b' = (a - b) w; the last two stages
 * are one radix-4 step within the SIMD vectors.
 */
function difStages(re: usize, im: usize, n: i32, twRe: usize, twIm: usize): void {
  for (let h = n >> 1; h >= 4; h >>= 1) {
    const tw = twRe + (<usize>(h - 1) << 2);
    const twi = twIm + (<usize>(h - 1) << 2);
    const hb = <usize>h << 2;
    for (let s = 0; s < n; s += h << 1) {
      const pr = re + (<usize>s << 2);
      const pi = im + (<usize>s << 2);
      for (let j: usize = 0; j < hb; j += 16) {
        const ar = v128.load(pr + j), ai = v128.load(pi + j);
        const br = v128.load(pr + hb + j), bi = v128.load(pi + hb + j);
        v128.store(pr + j, f32x4.add(ar, br));
        v128.store(pi + j, f32x4.add(ai, bi));
        const dr = f32x4.sub(ar, br), di = f32x4.sub(ai, bi);
        const wr = v128.load(tw + j), wi = v128.load(twi + j);
        v128.store(pr + hb + j, f32x4.sub(f32x4.mul(dr, wr), f32x4.mul(di, wi)));
        v128.store(pi + hb + j, f32x4.add(f32x4.mul(dr, wi), f32x4.mul(di, wr)));
      }
    }
  }
  const alt = f32x4(1, -1, 1, -1);
  const half = f32x4(1, 1, -1, -1);
  for (let k: usize = 0; k < (<usize>n << 2); k += 16) {
    const a = v128.load(re + k), b = v128.load(im + k);
    // h = 2: (y0 + y2, y1 + y3, y0 - y2, (y1 - y3)(-i)); (-i)(c + id) = d - ic.
    const sr = f32x4.add(v128.shuffle<f32>(a, a, 0, 1, 0, 1), f32x4.mul(v128.shuffle<f32>(a, a, 2, 3, 2, 3), half));
    const si = f32x4.add(v128.shuffle<f32>(b, b, 0, 1, 0, 1), f32x4.mul(v128.shuffle<f32>(b, b, 2, 3, 2, 3), half));
    // Lane 3 holds y1 - y3 = c + id: replace by (d, -c).
    const r2 = v128.shuffle<f32>(sr, si, 0, 1, 2, 7);
    const i2 = v128.shuffle<f32>(si, f32x4.neg(sr), 0, 1, 2, 7);
    // h = 1: (x0 + x1, x0 - x1, x2 + x3, x2 - x3)
    v128.store(re + k, f32x4.add(v128.shuffle<f32>(r2, r2, 0, 0, 2, 2), f32x4.mul(v128.shuffle<f32>(r2, r2, 1, 1, 3, 3), alt)));
    v128.store(im + k, f32x4.add(v128.shuffle<f32>(i2, i2, 0, 0, 2, 2), f32x4.mul(v128.shuffle<f32>(i2, i2, 1, 1, 3, 3), alt)));
  }
}

/**
 * Frequency response of a real, even spatial kernel: kernel[0..n) holds h(k) for k = 0..n/2
 * and h(-k) at n-k (circular layout). Writes the real response to response[0..n).
 * re/im are n-float scratch arrays.
 */
export function realEvenResponse(
  kernel: usize, n: i32, response: usize,
  twRe: usize, twIm: usize, bitrev: usize, re: usize, im: usize,
): void {
  memory.copy(re, kernel, <usize>n << 2);
  memory.fill(im, 0, <usize>n << 2);
  fft(re, im, n, twRe, twIm, bitrev);
  memory.copy(response, re, <usize>n << 2);
}

/**
 * Filters views [view0, view1) of a sinogram row by row: each row (nCh channels, times the
 * matching row of `weights` when weights != 0, or, when viewScale != 0, times the one row
 * `weights` scaled by viewScale[v]) is zero-padded to nPad, transformed, multiplied by
 * the real response H (nPad floats) and transformed back. Two rows share one complex FFT (real
 * and imaginary parts), which is exact because H is real and even.
 * Output row v starts at out + (v*outStride + 1) floats; out[v*outStride] and the cells after
 * the nCh channels up to outStride are zeroed (the backprojector reads them as "no data").
 * H must already include the 1/nPad of the inverse transform.
 */
export function filterViews(
  sino: usize, nCh: i32, view0: i32, view1: i32, weights: usize, viewScale: usize,
  H: usize, nPad: i32, twRe: usize, twIm: usize, bitrev: usize, re: usize, im: usize,
  out: usize, outStride: i32,
): void {
  const rowBytes = <usize>nCh << 2;
  for (let v = view0; v < view1; v += 2) {
    const hasPair = v + 1 < view1;
    memory.fill(re, 0, <usize>nPad << 2);
    memory.fill(im, 0, <usize>nPad << 2);
    scatterRow(re, sino + <usize>v * rowBytes, weightRow(weights, viewScale, v, rowBytes), rowScale(viewScale, v), nCh, bitrev);
    if (hasPair) {
      scatterRow(im, sino + <usize>(v + 1) * rowBytes, weightRow(weights, viewScale, v + 1, rowBytes), rowScale(viewScale, v + 1), nCh, bitrev);
    }
    ditStages(re, im, nPad, twRe, twIm);
    // Y = H X, then conjugate so that a second forward transform gives the (scaled) inverse.
    for (let k: usize = 0; k < (<usize>nPad << 2); k += 16) {
      const h = v128.load(H + k);
      v128.store(re + k, f32x4.mul(v128.load(re + k), h));
      v128.store(im + k, f32x4.neg(f32x4.mul(v128.load(im + k), h)));
    }
    difStages(re, im, nPad, twRe, twIm);
    gatherRow(out, v, outStride, re, nCh, 1.0, bitrev);
    if (hasPair) gatherRow(out, v + 1, outStride, im, nCh, -1.0, bitrev);
  }
}

/** The weight row of view v: its own row of a full table, or the shared row. */
@inline function weightRow(weights: usize, viewScale: usize, v: i32, rowBytes: usize): usize {
  if (weights == 0) return 0;
  return viewScale == 0 ? weights + <usize>v * rowBytes : weights;
}

@inline function rowScale(viewScale: usize, v: i32): f32 {
  return viewScale == 0 ? 1 : ldf(viewScale, v);
}

/** dst[bitrev[k]] = src[k] * w[k] * scale for the nCh samples (dst zeroed beforehand). */
@inline function scatterRow(dst: usize, src: usize, w: usize, scale: f32, nCh: i32, bitrev: usize): void {
  if (w == 0) {
    for (let k = 0; k < nCh; k++) stf(dst, ldi(bitrev, k), ldf(src, k));
  } else {
    for (let k = 0; k < nCh; k++) stf(dst, ldi(bitrev, k), ldf(src, k) * ldf(w, k) * scale);
  }
}

/** Row v of the output: channel k from src[bitrev[k]] times sign, zero cells around it. */
@inline function gatherRow(out: usize, v: i32, stride: i32, src: usize, nCh: i32, sign: f32, bitrev: usize): void {
  const row = out + (<usize>v * <usize>stride << 2);
  stf(row, 0, 0);
  for (let k = 0; k < nCh; k++) stf(row, k + 1, ldf(src, ldi(bitrev, k)) * sign);
  for (let k = nCh + 1; k < stride; k++) stf(row, k, 0);
}
