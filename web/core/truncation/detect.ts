// Truncation detection: is each view cut off at its left / right detector edge?
// A view is truncated at an edge when the mean of its outermost channels exceeds a threshold
// set above the noise of the data (common practice: a complete projection falls to air,
// i.e. to zero line integral, before the detector ends).
import type { Scan } from '../scan';

export interface EdgeReport {
  truncated: boolean;
  /** Mean line integral over the outermost channels. */
  value: number;
}

export interface ViewReport {
  view: number;
  left: EdgeReport;
  right: EdgeReport;
}

export interface TruncationReport {
  views: ViewReport[];
  /** Line-integral level above which an edge counts as truncated. */
  threshold: number;
  /** Noise estimate of the line integrals (robust, from channel-to-channel differences). */
  noiseSigma: number;
  truncatedFraction: number;
  leftFraction: number;
  rightFraction: number;
}

/** Channels averaged at each edge. */
const EDGE_CHANNELS = 3;

/**
 * Robust noise level of a sinogram: median absolute second difference along channels,
 * scaled to a Gaussian sigma (MAD / 0.6745, and / sqrt(6) for the second difference of white
 * noise; common practice).
 */
export function estimateNoise(data: Float32Array, nCh: number): number {
  const diffs: number[] = [];
  const stride = Math.max(1, Math.floor(data.length / nCh / 64));
  for (let v = 0; v < data.length / nCh; v += stride) {
    for (let k = 1; k < nCh - 1; k++) {
      const o = v * nCh + k;
      diffs.push(Math.abs(data[o - 1] - 2 * data[o] + data[o + 1]));
    }
  }
  if (!diffs.length) return 0;
  diffs.sort((x, y) => x - y);
  return diffs[Math.floor(diffs.length / 2)] / 0.6745 / Math.sqrt(6);
}

/** Per-view, per-side truncation report of a 2D scan. */
export function detectTruncation(scan: Scan): TruncationReport {
  const nCh = scan.geometry.detector.channels;
  const nViews = scan.data.length / nCh;
  const sigma = estimateNoise(scan.data, nCh);
  // Five standard errors of the edge mean above zero, and never below 0.01 (about 0.5 mm of water).
  const threshold = Math.max(0.01, (5 * sigma) / Math.sqrt(EDGE_CHANNELS));
  const n = Math.min(EDGE_CHANNELS, nCh);
  const views: ViewReport[] = [];
  let left = 0, right = 0, any = 0;
  for (let v = 0; v < nViews; v++) {
    const row = scan.data.subarray(v * nCh, (v + 1) * nCh);
    let l = 0, r = 0;
    for (let k = 0; k < n; k++) {
      l += row[k];
      r += row[nCh - 1 - k];
    }
    const rep = { view: v, left: { truncated: l / n > threshold, value: l / n }, right: { truncated: r / n > threshold, value: r / n } };
    views.push(rep);
    if (rep.left.truncated) left++;
    if (rep.right.truncated) right++;
    if (rep.left.truncated || rep.right.truncated) any++;
  }
  return { views, threshold, noiseSigma: sigma, truncatedFraction: any / nViews, leftFraction: left / nViews, rightFraction: right / nViews };
}
