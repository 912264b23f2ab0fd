// Radix-2 complex FFT on split real/imaginary f32 arrays, and FFT-based row filtering.
// Cooley & Tukey (1965), decimation in time after a bit-reversal permutation; stages whose
// half-length is at least 4 run four butterflies per SIMD step.
import { ldf, stf, ldi, sti } from './memory';

/**
 * Fills the twiddle and bit-reversal tables for an n-point FFT (n a power of two).
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

/** In-place forward FFT (sign -1, unnormalized) of re + i*im, n a power of two. */
export function fft(re: usize, im: usize, n: i32, twRe: usize, twIm: usize, bitrev: usize): void {
  for (let i = 0; i < n; i++) {
    const j = ldi(bitrev, i);
    if (j > i) {
      const tr = ldf(re, i); stf(re, i, ldf(re, j)); stf(re, j, tr);
      const ti = ldf(im, i); stf(im, i, ldf(im, j)); stf(im, j, ti);
    }
  }
  let h = 1;
  for (; h < n && h < 4; h <<= 1) {
    const tw = h - 1;
    for (let s = 0; s < n; s += h << 1) {
      for (let j = 0; j < h; j++) {
        const wr = ldf(twRe, tw + j), wi = ldf(twIm, tw + j);
        const a = s + j, b = a + h;
        const br = ldf(re, b), bi = ldf(im, b);
        const tr = br * wr - bi * wi;
        const ti = br * wi + bi * wr;
        const ar = ldf(re, a), ai = ldf(im, a);
        stf(re, a, ar + tr); stf(im, a, ai + ti);
        stf(re, b, ar - tr); stf(im, b, ai - ti);
      }
    }
  }
  for (; h < n; h <<= 1) {
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
 * matching row of `weights` when weights != 0) is zero-padded to nPad, transformed, multiplied by
 * the real response H (nPad floats) and transformed back. Two rows share one complex FFT (real
 * and imaginary parts), which is exact because H is real and even.
 * Output row v starts at out + (v*outStride + 1) floats; out[v*outStride] and the cells after
 * the nCh channels up to outStride are zeroed (the backprojector reads them as "no data").
 * H must already include the 1/nPad of the inverse transform.
 */
export function filterViews(
  sino: usize, nCh: i32, view0: i32, view1: i32, weights: usize,
  H: usize, nPad: i32, twRe: usize, twIm: usize, bitrev: usize, re: usize, im: usize,
  out: usize, outStride: i32,
): void {
  const rowBytes = <usize>nCh << 2;
  for (let v = view0; v < view1; v += 2) {
    const hasPair = v + 1 < view1;
    loadRow(re, sino + <usize>v * rowBytes, weights == 0 ? 0 : weights + <usize>v * rowBytes, nCh, nPad);
    if (hasPair) {
      loadRow(im, sino + <usize>(v + 1) * rowBytes, weights == 0 ? 0 : weights + <usize>(v + 1) * rowBytes, nCh, nPad);
    } else {
      memory.fill(im, 0, <usize>nPad << 2);
    }
    fft(re, im, nPad, twRe, twIm, bitrev);
    // Y = H X, then conjugate so that a second forward FFT gives the (scaled) inverse.
    for (let k: usize = 0; k < (<usize>nPad << 2); k += 16) {
      const h = v128.load(H + k);
      v128.store(re + k, f32x4.mul(v128.load(re + k), h));
      v128.store(im + k, f32x4.neg(f32x4.mul(v128.load(im + k), h)));
    }
    fft(re, im, nPad, twRe, twIm, bitrev);
    storeRow(out, v, outStride, re, nCh, 1.0);
    if (hasPair) storeRow(out, v + 1, outStride, im, nCh, -1.0);
  }
}

@inline function loadRow(dst: usize, src: usize, w: usize, nCh: i32, nPad: i32): void {
  if (w == 0) {
    memory.copy(dst, src, <usize>nCh << 2);
  } else {
    let k = 0;
    for (; k + 4 <= nCh; k += 4) {
      const o = <usize>k << 2;
      v128.store(dst + o, f32x4.mul(v128.load(src + o), v128.load(w + o)));
    }
    for (; k < nCh; k++) stf(dst, k, ldf(src, k) * ldf(w, k));
  }
  memory.fill(dst + (<usize>nCh << 2), 0, <usize>(nPad - nCh) << 2);
}

@inline function storeRow(out: usize, v: i32, stride: i32, src: usize, nCh: i32, sign: f32): void {
  const row = out + (<usize>v * <usize>stride << 2);
  stf(row, 0, 0);
  for (let k = 0; k < nCh; k++) stf(row, k + 1, ldf(src, k) * sign);
  for (let k = nCh + 1; k < stride; k++) stf(row, k, 0);
}
