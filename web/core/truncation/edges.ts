// Edge analysis of a 2D scan: which view is cut off on which side, and how far the object
// reaches beyond each cut-off edge. The reach comes from Hsieh's water cylinder fit
// (water-fit.ts) under physical constraints, with the fitted tail lengths smoothed across
// neighbouring views (Hsieh et al. 2004 low-pass filter the fits across views; REFERENCES.md
// [hsieh-2004]). Both the truncation report (detect.ts) and the detector extension
// (extension-plan.ts) start from this one analysis.
import { InputError } from '../errors';
import { isFullScan } from '../geometry/coverage';
import type { Geometry } from '../geometry/types';
import { kernelKind, viewVectors } from '../geometry/view-vectors';
import { viewAngles } from '../recon/fbp-weights';
import type { Scan } from '../scan';
import { edgeStats, EDGE_CHANNELS, estimateNoise, type EdgeStats, type PerSide } from './edge-stats';
import { channelS, rayCoordinates, type RayCoordinates } from './ray-coords';
import { constrainedCylinder, cylinderWithLength, NO_TAIL, tailLength, type CylinderTail } from './water-fit';

/**
 * mu of water assumed when the scan does not record it: 0.01937 /mm, water at 70 keV (NIST SRD
 * 126, log-log interpolated between 60 and 80 keV; REFERENCES.md [nist-srd126]).
 */
export const ASSUMED_MU_WATER = 0.01937;

/** Rotation (degrees) over which fitted tail lengths are smoothed on each side of a view. */
export const SMOOTHING_DEGREES = 5;

/** Extent of the least-squares edge fit, mm in s (converted to channels, 6 to 24). */
const FIT_MM = 6;

export interface EdgeAnalysis {
  geometry: Geometry;
  rays: RayCoordinates;
  /** Ray coordinate of each channel, mm. */
  s: Float64Array;
  nViews: number;
  /** Line-integral level above which an edge counts as truncated. */
  threshold: number;
  /** Noise estimate of the line integrals. */
  noiseSigma: number;
  /** mu used for the water cylinder fits, 1/mm, and whether it was assumed. */
  mu: number;
  muAssumed: boolean;
  /** Channels of the least-squares edge line. */
  fitChannels: number;
  /** Views on each side of a view whose tail lengths are smoothed together. */
  smoothingViews: number;
  stats: EdgeStats;
  truncated: PerSide<Uint8Array>;
  /** Smoothed, constrained water cylinder tail per view (NO_TAIL when the side is not cut off). */
  tails: PerSide<CylinderTail[]>;
  /** Estimated reach of the object beyond the edge, mm in s (0 when not cut off). */
  extent: PerSide<Float64Array>;
  /** s of the estimated object boundary on each side, mm. */
  boundary: PerSide<Float64Array>;
  /** Largest tail length allowed on each side (plausibility bound), mm. */
  maxExtent: PerSide<number>;
}

export interface EdgeOptions {
  /** mu of water, 1/mm (default: the scan's, else ASSUMED_MU_WATER). */
  mu?: number;
}

/**
 * Median of the valid values within +-half views, then the mean of those medians within
 * +-ceil(half/2): robust to single bad fits, smooth across views. `circular` wraps (full scans).
 */
export function smoothAcrossViews(x: Float64Array, valid: Uint8Array, half: number, circular: boolean): Float64Array {
  const n = x.length;
  const h1 = Math.min(half, (n - 1) >> 1), h2 = Math.min(Math.ceil(half / 2), (n - 1) >> 1);
  const win = new Float64Array(2 * h1 + 1);
  const at = (k: number) => (circular ? ((k % n) + n) % n : k);
  const med = new Float64Array(n);
  for (let v = 0; v < n; v++) {
    med[v] = x[v];
    if (!valid[v]) continue;
    let m = 0;
    for (let k = v - h1; k <= v + h1; k++) {
      const i = at(k);
      if (i < 0 || i >= n || !valid[i]) continue;
      // Insertion into the sorted window (at most 2 h1 + 1 values).
      let j = m++;
      while (j > 0 && win[j - 1] > x[i]) { win[j] = win[j - 1]; j--; }
      win[j] = x[i];
    }
    med[v] = m % 2 ? win[m >> 1] : (win[(m >> 1) - 1] + win[m >> 1]) / 2;
  }
  const out = new Float64Array(n);
  for (let v = 0; v < n; v++) {
    out[v] = med[v];
    if (!valid[v]) continue;
    let sum = 0, m = 0;
    for (let k = v - h2; k <= v + h2; k++) {
      const i = at(k);
      if (i >= 0 && i < n && valid[i]) { sum += med[i]; m++; }
    }
    out[v] = sum / m;
  }
  return out;
}

/**
 * Plausibility bound on the object's reach, |s| in mm: for fan beams 0.6 R, so that a grid
 * covering the object stays inside the source circle (common practice: the patient lies well
 * inside the gantry); for parallel beams 8 times the detector's half width.
 */
function reachBound(rays: RayCoordinates, s: Float64Array): number {
  if (rays.form !== 'parallel') return 0.6 * rays.sourceIsocenter;
  return 8 * Math.max(Math.abs(s[0]), Math.abs(s[s.length - 1]));
}

/** Throws InputError naming how many line integrals are NaN or infinite, and the first one. */
function requireFinite(data: Float32Array, nCh: number): void {
  let bad = 0, first = -1;
  for (let i = 0; i < data.length; i++) {
    if (!Number.isFinite(data[i])) {
      bad++;
      if (first < 0) first = i;
    }
  }
  if (bad) {
    throw new InputError(`scan: ${bad} of ${data.length} line integrals are not finite (NaN or infinity), the first at view ${Math.floor(first / nCh)} channel ${first % nCh}; expected finite values (check the flat/dark correction)`);
  }
}

/** Analyses both edges of every view of a 2D scan. */
export function analyseEdges(scan: Scan, options: EdgeOptions = {}): EdgeAnalysis {
  const g = scan.geometry;
  const rays = rayCoordinates(g);
  const s = channelS(g, rays);
  const nCh = s.length;
  const nViews = scan.data.length / nCh;
  requireFinite(scan.data, nCh);
  const noiseSigma = estimateNoise(scan.data, nCh);
  // Five standard errors of the edge value above zero, and never below 0.01 (about 0.5 mm of
  // water): a complete projection falls to air before the detector ends (common practice).
  const threshold = Math.max(0.01, (5 * noiseSigma) / Math.sqrt(EDGE_CHANNELS));
  const mu = options.mu ?? scan.muWater ?? ASSUMED_MU_WATER;
  const edgeWidth = nCh > 1 ? Math.min(Math.abs(s[1] - s[0]), Math.abs(s[nCh - 1] - s[nCh - 2])) : 1;
  const fitChannels = Math.max(6, Math.min(24, Math.round(FIT_MM / edgeWidth)));
  const stats = edgeStats(scan.data, s, fitChannels, threshold);

  const beta = viewAngles(viewVectors(g), kernelKind(g));
  const step = nViews > 1 ? Math.abs(beta[nViews - 1] - beta[0]) / (nViews - 1) : Math.PI;
  const smoothingViews = Math.max(1, Math.round((SMOOTHING_DEGREES * Math.PI) / 180 / (step || Math.PI)));
  const circular = isFullScan(g);
  const bound = reachBound(rays, s);
  const edgeS = [s[0], s[nCh - 1]];
  const maxExtent = edgeS.map((e) => Math.max(0, bound - Math.abs(e))) as PerSide<number>;

  const truncated = [new Uint8Array(nViews), new Uint8Array(nViews)] as PerSide<Uint8Array>;
  const smooth = [0, 1].map((side) => {
    const raw = new Float64Array(nViews);
    for (let v = 0; v < nViews; v++) {
      truncated[side][v] = stats.mean[side][v] > threshold ? 1 : 0;
      if (truncated[side][v]) raw[v] = tailLength(constrainedCylinder(stats.value[side][v], stats.slope[side][v], mu, maxExtent[side]));
    }
    return smoothAcrossViews(raw, truncated[side], smoothingViews, circular);
  }) as PerSide<Float64Array>;
  const none = [[], []] as PerSide<CylinderTail[]>;
  const zeros = [new Float64Array(nViews), new Float64Array(nViews)] as PerSide<Float64Array>;
  return withTailLengths({
    geometry: g, rays, s, nViews, threshold, noiseSigma, mu, muAssumed: options.mu === undefined && scan.muWater === undefined,
    fitChannels, smoothingViews, stats, truncated, tails: none, extent: zeros, boundary: zeros, maxExtent,
  }, smooth);
}

/**
 * The analysis with new tail lengths (mm in s, per view and side, e.g. smoothed further): the
 * water cylinders through each cut-off edge value with that length (at most maxExtent), their
 * reach and the object boundaries are rebuilt; sides that are not cut off keep no tail.
 */
export function withTailLengths(a: EdgeAnalysis, lengths: PerSide<Float64Array>): EdgeAnalysis {
  const n = a.nViews, nCh = a.s.length;
  const edgeS = [a.s[0], a.s[nCh - 1]];
  const tails = [[], []] as PerSide<CylinderTail[]>;
  const extent = [new Float64Array(n), new Float64Array(n)] as PerSide<Float64Array>;
  const boundary = [new Float64Array(n), new Float64Array(n)] as PerSide<Float64Array>;
  for (const side of [0, 1] as const) {
    const outward = side === 0 ? -1 : 1;
    for (let v = 0; v < n; v++) {
      const cut = a.truncated[side][v];
      const tail = cut ? cylinderWithLength(a.stats.value[side][v], Math.min(lengths[side][v], a.maxExtent[side]), a.mu) : NO_TAIL;
      tails[side].push(tail);
      extent[side][v] = tailLength(tail);
      boundary[side][v] = cut ? edgeS[side] + outward * extent[side][v] : a.stats.support[side][v];
    }
  }
  return { ...a, tails, extent, boundary };
}

/** Radius about the isocentre of a circle holding the estimated object, mm. */
export function objectRadius(a: EdgeAnalysis): number {
  let r = 0;
  for (let v = 0; v < a.nViews; v++) r = Math.max(r, Math.abs(a.boundary[0][v]), Math.abs(a.boundary[1][v]));
  return r;
}
