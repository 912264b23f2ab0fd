// Reconstruction filters: spatial-domain ramp kernels and apodization windows.
//
// The discrete ramp is built in the spatial domain (Kak & Slaney, Principles of Computerized
// Tomographic Imaging, 1988, ch. 3, eq. 61) and transformed with zero padding to at least
// 2N - 1 samples, so that its DC value is the small positive value of the sampled kernel rather
// than the zero of a sampled |f| (no DC offset in the reconstruction).
import { InputError } from '../errors';

/**
 * Windows of the ramp filter, from the sharpest (the plain ramp) to the smoothest: each passes
 * less noise power than the one before (test/engine/filter.test.ts checks the order).
 */
export const FILTER_WINDOWS = ['ramp', 'shepp-logan', 'cosine', 'hamming', 'hann'] as const;
export type FilterWindow = (typeof FILTER_WINDOWS)[number];

/** Smallest power of two >= 2n - 1 (linear, not circular, convolution of an n-sample row). */
export function paddedLength(n: number): number {
  let p = 1;
  while (p < 2 * n - 1) p <<= 1;
  return Math.max(p, 4);
}

/**
 * Ramp kernel times the sample spacing tau (mm), circular layout of length nPad:
 * tau * h(n tau) with h(0) = 1/(4 tau^2), h(even) = 0, h(odd n) = -1/(n^2 pi^2 tau^2)
 * (Kak & Slaney eq. 61). Convolving with it gives Q = tau * sum h P.
 */
export function rampKernel(nPad: number, tau: number): Float32Array {
  const k = new Float32Array(nPad);
  k[0] = 1 / (4 * tau);
  for (let n = 1; n <= nPad / 2; n += 2) {
    const v = -1 / (n * n * Math.PI * Math.PI * tau);
    k[n] = v;
    k[nPad - n] = v;
  }
  return k;
}

/**
 * Equiangular fan-beam kernel times the angular step alpha (radians): alpha * (n alpha /
 * sin(n alpha))^2 h(n alpha), i.e. 1/(4 alpha) at 0 and -alpha/(pi^2 sin^2(n alpha)) for odd n
 * (Kak & Slaney ch. 3.4.1; their g carries an extra 1/2 for the full-scan redundancy, which
 * Rimfill applies as a redundancy weight instead).
 */
export function equiangularKernel(nPad: number, alpha: number): Float32Array {
  const k = new Float32Array(nPad);
  k[0] = 1 / (4 * alpha);
  for (let n = 1; n <= nPad / 2; n += 2) {
    const s = Math.sin(n * alpha);
    const v = -alpha / (Math.PI * Math.PI * s * s);
    k[n] = v;
    k[nPad - n] = v;
  }
  return k;
}

/**
 * Apodization window at normalised frequency r = f / f_Nyquist in [0, 1], stretched so that it
 * ends at `bandEdge` (a fraction of the Nyquist frequency in (0, 1]; zero above). Forms from
 * Kak & Slaney ch. 3 and common practice: Shepp-Logan sinc(r/2), cosine cos(pi r/2), Hamming
 * 0.54 + 0.46 cos(pi r), Hann 0.5 + 0.5 cos(pi r).
 */
export function windowGain(window: FilterWindow, r: number, bandEdge = 1): number {
  const x = r / bandEdge;
  if (x > 1) return 0;
  switch (window) {
    case 'ramp':
      return 1;
    case 'shepp-logan':
      return x === 0 ? 1 : Math.sin((Math.PI * x) / 2) / ((Math.PI * x) / 2);
    case 'cosine':
      return Math.cos((Math.PI * x) / 2);
    case 'hamming':
      return 0.54 + 0.46 * Math.cos(Math.PI * x);
    case 'hann':
      return 0.5 + 0.5 * Math.cos(Math.PI * x);
  }
}

/** Multiplies a response (length nPad, FFT order) by the window, in place. */
export function applyWindow(response: Float32Array, window: FilterWindow, bandEdge = 1): Float32Array {
  const n = response.length;
  for (let k = 0; k < n; k++) {
    const r = (2 * Math.min(k, n - k)) / n;
    response[k] *= windowGain(window, r, bandEdge);
  }
  return response;
}

/** Largest band limit accepted, line pairs per cm (a 0.025 mm sampling at the isocentre). */
export const MAX_BAND_LIMIT = 200;

/** Checks a window name (and a band limit in line pairs per cm, when given) from user input. */
export function checkFilter(window: string, bandLimit?: number): FilterWindow {
  if (!(FILTER_WINDOWS as readonly string[]).includes(window)) {
    throw new InputError(`filter: got "${window}", expected one of ${FILTER_WINDOWS.join(', ')}`);
  }
  if (bandLimit !== undefined && !(bandLimit > 0 && bandLimit <= MAX_BAND_LIMIT)) {
    throw new InputError(`filter band limit: got ${bandLimit}, expected line pairs per cm at the isocentre, above 0 and at most ${MAX_BAND_LIMIT}`);
  }
  return window as FilterWindow;
}
