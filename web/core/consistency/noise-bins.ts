// How much a residual sinogram spreads as a function of the measured line integral. Photon
// noise on a line integral p grows with p (its variance is about e^p / I0 for I0 photons per ray:
// the transmitted count is Poisson with mean I0 e^-p, common practice), so rays through thick
// parts of the body are much noisier than rays near its edge. The spread is measured on the
// residual itself, in bins of rays with similar measured values, so that a consistent image
// does not flag the noisiest views and a noise-free scan keeps its full sensitivity.

/** Rays of similar measured value and the robust spread of their residuals. */
export interface NoiseBin {
  /** Largest measured line integral in the bin. */
  upTo: number;
  /** 1.4826 * median |a - median a| of the bin's channel-averaged residuals (a Gaussian's sigma). */
  sigma: number;
  rays: number;
}

/** Most bins; fewer when the scan has fewer than MIN_RAYS_PER_BIN rays per bin. */
export const MAX_NOISE_BINS = 16;
export const MIN_RAYS_PER_BIN = 500;

/** 1.4826 = 1 / Phi^-1(3/4): makes the MAD a consistent estimate of a Gaussian's sigma. */
const MAD_TO_SIGMA = 1.4826;

function median(sorted: Float32Array): number {
  const n = sorted.length;
  if (!n) return 0;
  const m = n >> 1;
  return n % 2 ? sorted[m] : 0.5 * (sorted[m - 1] + sorted[m]);
}

/** Robust sigma of a set of values (MAD about their median). */
export function robustSigmaOf(values: Float32Array): number {
  const s = Float32Array.from(values).sort();
  const med = median(s);
  return MAD_TO_SIGMA * median(s.map((v) => Math.abs(v - med)).sort());
}

/**
 * Bins the rays by measured value into equally populated bins (ties stay together) and measures
 * the robust spread of `averaged` in each. Non-finite averaged values are skipped. Returns the
 * bins in increasing order and the bin index of every ray (-1 where skipped).
 */
export function noiseBins(averaged: Float32Array, measured: Float32Array): { bins: NoiseBin[]; binOf: Int16Array } {
  const idx: number[] = [];
  for (let i = 0; i < averaged.length; i++) if (Number.isFinite(averaged[i]) && Number.isFinite(measured[i])) idx.push(i);
  idx.sort((a, b) => measured[a] - measured[b]);
  const count = Math.max(1, Math.min(MAX_NOISE_BINS, Math.floor(idx.length / MIN_RAYS_PER_BIN)));
  const binOf = new Int16Array(averaged.length).fill(-1);
  const bins: NoiseBin[] = [];
  let start = 0;
  for (let b = 0; b < count && start < idx.length; b++) {
    let end = b === count - 1 ? idx.length : Math.round(((b + 1) * idx.length) / count);
    // Keep equal measured values in one bin.
    while (end < idx.length && end > start && measured[idx[end]] === measured[idx[end - 1]]) end++;
    if (end <= start) continue;
    const values = new Float32Array(end - start);
    for (let j = start; j < end; j++) {
      values[j - start] = averaged[idx[j]];
      binOf[idx[j]] = bins.length;
    }
    bins.push({ upTo: measured[idx[end - 1]], sigma: robustSigmaOf(values), rays: end - start });
    start = end;
  }
  return { bins, binOf };
}
