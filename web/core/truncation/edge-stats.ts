// Per-view statistics at the two detector edges of a 2D sinogram: the outermost channel's
// value (is the view cut off?), a least-squares line over the last few channels (edge
// value and outward slope, for extrapolation), and where the object's support ends when the
// edge is not cut off. Sides are indexed 0 = left (channel 0, smallest s), 1 = right.

/**
 * Channels averaged at each edge for the truncation test: the outermost one alone, so that a
 * view counts as cut off exactly when the object reaches the detector's last ray (an average
 * over more channels would also flag objects ending just inside the edge).
 */
export const EDGE_CHANNELS = 1;

/** Two per-view arrays, [left, right]. */
export type PerSide<T> = [T, T];

export interface EdgeStats {
  nViews: number;
  /** Line integral of the outermost channel (mean over the EDGE_CHANNELS outermost). */
  mean: PerSide<Float64Array>;
  /** Least-squares line value at the edge channel. */
  value: PerSide<Float64Array>;
  /** Least-squares outward slope dp/ds (towards the outside of the detector), 1/mm. */
  slope: PerSide<Float64Array>;
  /** s (mm) where the data fall below the threshold, searching inwards from the edge; the edge itself when they never do. */
  support: PerSide<Float64Array>;
}

/**
 * Robust noise level of a sinogram: median absolute second difference along channels over
 * about 32 evenly spread views, scaled to a Gaussian sigma (MAD / 0.6745, and / sqrt(6) for
 * the second difference of white noise; common practice).
 */
export function estimateNoise(data: Float32Array, nCh: number): number {
  const nViews = data.length / nCh;
  const stride = Math.max(1, Math.floor(nViews / 32));
  if (nCh < 3 || nViews < 1) return 0;
  const diffs = new Float32Array(Math.ceil(nViews / stride) * (nCh - 2));
  let n = 0;
  for (let v = 0; v < nViews; v += stride) {
    for (let k = 1; k < nCh - 1; k++) {
      const o = v * nCh + k;
      diffs[n++] = Math.abs(data[o - 1] - 2 * data[o] + data[o + 1]);
    }
  }
  return selectKth(diffs.subarray(0, n), Math.floor(n / 2)) / 0.6745 / Math.sqrt(6);
}

/** The k-th smallest value (0-based), reordering `a` in place (Hoare's selection, expected O(n)). */
export function selectKth(a: Float32Array, k: number): number {
  let lo = 0, hi = a.length - 1;
  while (lo < hi) {
    const pivot = a[(lo + hi) >> 1];
    let i = lo, j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i]; a[i] = a[j]; a[j] = t;
        i++; j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else break;
  }
  return a[k];
}

/**
 * Edge statistics of every view. `s` holds the ray coordinate of each channel (mm),
 * `fitChannels` the number of channels of the least-squares line, `threshold` the level
 * below which a line integral counts as air.
 */
export function edgeStats(data: Float32Array, s: Float64Array, fitChannels: number, threshold: number): EdgeStats {
  const nCh = s.length;
  const nViews = data.length / nCh;
  const make = () => [new Float64Array(nViews), new Float64Array(nViews)] as PerSide<Float64Array>;
  const st: EdgeStats = { nViews, mean: make(), value: make(), slope: make(), support: make() };
  const nMean = Math.min(EDGE_CHANNELS, nCh);
  const nFit = Math.max(2, Math.min(fitChannels, nCh));
  for (let v = 0; v < nViews; v++) {
    const row = data.subarray(v * nCh, (v + 1) * nCh);
    for (const side of [0, 1] as const) {
      // Channel index of the j-th channel counted inwards from this side's edge.
      const at = side === 0 ? (j: number) => j : (j: number) => nCh - 1 - j;
      const outward = side === 0 ? -1 : 1;
      let m = 0;
      for (let j = 0; j < nMean; j++) m += row[at(j)];
      st.mean[side][v] = m / nMean;
      // Least-squares line p = a + b x with x = outward distance from the edge channel.
      const e = s[at(0)];
      let sx = 0, sy = 0, sxx = 0, sxy = 0;
      for (let j = 0; j < nFit; j++) {
        const x = outward * (s[at(j)] - e), y = row[at(j)];
        sx += x; sy += y; sxx += x * x; sxy += x * y;
      }
      const det = nFit * sxx - sx * sx;
      const b = det > 0 ? (nFit * sxy - sx * sy) / det : 0;
      st.slope[side][v] = b;
      st.value[side][v] = (sy - b * sx) / nFit;
      let j = 0;
      while (j < nCh && row[at(j)] <= threshold) j++;
      st.support[side][v] = s[at(Math.max(0, j - 1))];
    }
  }
  return st;
}
