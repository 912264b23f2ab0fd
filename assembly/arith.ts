// Elementwise array helpers (SIMD). Pointers are byte addresses of f32 arrays, n elements.
import { ldf, stf } from './memory';

/** dst[i] *= s */
export function scaleArray(dst: usize, n: i32, s: f32): void {
  const sv = f32x4.splat(s);
  let i = 0;
  for (; i + 4 <= n; i += 4) {
    const p = dst + (<usize>i << 2);
    v128.store(p, f32x4.mul(v128.load(p), sv));
  }
  for (; i < n; i++) stf(dst, i, ldf(dst, i) * s);
}

/** dst[i] += src[i] * s */
export function addScaled(dst: usize, src: usize, n: i32, s: f32): void {
  const sv = f32x4.splat(s);
  let i = 0;
  for (; i + 4 <= n; i += 4) {
    const o = <usize>i << 2;
    v128.store(dst + o, f32x4.add(v128.load(dst + o), f32x4.mul(v128.load(src + o), sv)));
  }
  for (; i < n; i++) stf(dst, i, ldf(dst, i) + ldf(src, i) * s);
}

/** dst[i] = a[i] * b[i] */
export function multiplyArrays(dst: usize, a: usize, b: usize, n: i32): void {
  let i = 0;
  for (; i + 4 <= n; i += 4) {
    const o = <usize>i << 2;
    v128.store(dst + o, f32x4.mul(v128.load(a + o), v128.load(b + o)));
  }
  for (; i < n; i++) stf(dst, i, ldf(a, i) * ldf(b, i));
}

/** dst[i] = 0 */
export function zeroArray(dst: usize, n: i32): void {
  memory.fill(dst, 0, <usize>n << 2);
}

/** Sum of a[i]*b[i] in f64 (for adjoint tests and residual norms). */
export function dotArrays(a: usize, b: usize, n: i32): f64 {
  let s: f64 = 0;
  for (let i = 0; i < n; i++) s += <f64>ldf(a, i) * <f64>ldf(b, i);
  return s;
}

/**
 * Pads a 2D image (nx x ny, x fastest) with a one-pixel zero border into two layouts:
 * padded (x fastest, (nx+2) x (ny+2)) and paddedT (y fastest, (ny+2) x (nx+2)).
 * Both buffers need one extra trailing float (read with weight 0 by the interpolators).
 */
export function padImage2d(img: usize, nx: i32, ny: i32, padded: usize, paddedT: usize): void {
  const px = nx + 2;
  const py = ny + 2;
  memory.fill(padded, 0, <usize>(px * py + 1) << 2);
  memory.fill(paddedT, 0, <usize>(px * py + 1) << 2);
  for (let j = 0; j < ny; j++) {
    memory.copy(padded + (<usize>((j + 1) * px + 1) << 2), img + (<usize>(j * nx) << 2), <usize>nx << 2);
    for (let i = 0; i < nx; i++) stf(paddedT, (i + 1) * py + j + 1, ldf(img, j * nx + i));
  }
}

/** Adds the interior of padded ((nx+2) x (ny+2), x fastest) and paddedT (y fastest) into out. */
export function unpadAdd2d(padded: usize, paddedT: usize, nx: i32, ny: i32, out: usize): void {
  const px = nx + 2;
  const py = ny + 2;
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const k = j * nx + i;
      stf(out, k, ldf(out, k) + ldf(padded, (j + 1) * px + i + 1) + ldf(paddedT, (i + 1) * py + j + 1));
    }
  }
}
