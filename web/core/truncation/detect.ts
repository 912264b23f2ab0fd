// Truncation report of a 2D scan (what `rimfill inspect` prints and the page shows): per view
// and side whether the projection is cut off (edge value against a noise-aware threshold; a
// complete projection falls to air before the detector ends, common practice), the edge value
// and outward slope, how far the object reaches beyond the edge (water cylinder fit, edges.ts),
// the mass each view misses (mass.ts), and a summary.
import { fovRadius } from '../geometry/view-vectors';
import type { Scan } from '../scan';
import { analyseEdges, objectRadius, type EdgeAnalysis, type EdgeOptions } from './edges';
import { massConsistency, massUnavailable, type MassReport } from './mass';

export { estimateNoise } from './edge-stats';

export interface EdgeReport {
  truncated: boolean;
  /** Line integral of the outermost channel. */
  value: number;
  /** Least-squares line value at the edge channel. */
  edgeValue: number;
  /** Outward slope of the least-squares line, 1/mm (negative: falling towards the outside). */
  slope: number;
  /** Estimated reach of the object beyond the edge, mm at the isocentre (0 when not cut off). */
  extentMm: number;
  /** Signed distance of the estimated object boundary from the isocentre, mm. */
  boundaryMm: number;
}

export interface ViewReport {
  view: number;
  left: EdgeReport;
  right: EdgeReport;
  /** Mass missing from the (rebinned parallel) view at this index, mm; absent when mass consistency is unavailable. */
  missingMass?: number;
}

export interface MassSummary {
  form: MassReport['form'];
  /** Object mass int int mu dx dy, mm; a lower bound when no view is complete. */
  totalMass: number;
  basis: MassReport['basis'];
  completeViews: number;
  /** Relative spread of the complete views' totals (how well the data satisfy the condition). */
  spread: number | null;
  /** Largest and mean missing fraction over cut-off views. */
  maxMissingFraction: number;
  meanMissingFraction: number;
}

export interface TruncationSummary {
  truncatedFraction: number;
  leftFraction: number;
  rightFraction: number;
  /** The side cut off in more views (ties: the one reaching further), or 'none'. */
  worstSide: 'left' | 'right' | 'none';
  maxExtentMm: { left: number; right: number };
  meanExtentMm: { left: number; right: number };
  /** Estimated object diameter: the widest view's span between its two boundaries, mm. */
  objectDiameterMm: number;
  /** Radius about the isocentre of a circle holding the estimated object, mm. */
  objectRadiusMm: number;
  fovDiameterMm: number;
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
  summary: TruncationSummary;
  /** mu of the water cylinder fits, 1/mm, and whether it was assumed (the scan records none). */
  muWater: number;
  muAssumed: boolean;
  /** Channels of the least-squares edge line; views smoothed on each side of a view. */
  fitChannels: number;
  smoothingViews: number;
  mass: MassSummary | { unavailable: string };
}

const round = (x: number, digits = 4) => Number(x.toPrecision(digits));

/** Summary of a mass consistency report. */
export function summarizeMass(m: MassReport): MassSummary {
  let maxF = 0, sumF = 0, n = 0;
  for (let v = 0; v < m.totals.length; v++) {
    if (m.complete[v]) continue;
    const f = m.missing[v] / m.totalMass;
    maxF = Math.max(maxF, f);
    sumF += f;
    n++;
  }
  return {
    form: m.form, totalMass: m.totalMass, basis: m.basis, completeViews: m.completeViews,
    spread: Number.isFinite(m.spread) ? m.spread : null,
    maxMissingFraction: maxF, meanMissingFraction: n ? sumF / n : 0,
  };
}

/** Summary figures of an edge analysis. */
export function summarize(a: EdgeAnalysis): TruncationSummary {
  const n = a.nViews;
  let left = 0, right = 0, any = 0, diameter = 0;
  const maxE = [0, 0], sumE = [0, 0];
  for (let v = 0; v < n; v++) {
    const l = a.truncated[0][v], r = a.truncated[1][v];
    left += l; right += r; any += l | r;
    for (const side of [0, 1]) {
      maxE[side] = Math.max(maxE[side], a.extent[side][v]);
      sumE[side] += a.extent[side][v];
    }
    diameter = Math.max(diameter, a.boundary[1][v] - a.boundary[0][v]);
  }
  const mean = (side: number, count: number) => (count ? sumE[side] / count : 0);
  let worst: TruncationSummary['worstSide'] = 'none';
  if (left + right > 0) worst = left > right || (left === right && maxE[0] >= maxE[1]) ? 'left' : 'right';
  return {
    truncatedFraction: any / n, leftFraction: left / n, rightFraction: right / n, worstSide: worst,
    maxExtentMm: { left: maxE[0], right: maxE[1] },
    meanExtentMm: { left: mean(0, left), right: mean(1, right) },
    objectDiameterMm: diameter,
    objectRadiusMm: objectRadius(a),
    fovDiameterMm: 2 * fovRadius(a.geometry),
  };
}

/** Per-view, per-side truncation report of a 2D scan. */
export function detectTruncation(scan: Scan, options: EdgeOptions = {}): TruncationReport {
  const a = analyseEdges(scan, options);
  const why = massUnavailable(scan);
  const mass = why ? undefined : massConsistency(scan, a.threshold);
  const edge = (side: 0 | 1, v: number): EdgeReport => ({
    truncated: a.truncated[side][v] === 1,
    value: round(a.stats.mean[side][v], 6),
    edgeValue: round(a.stats.value[side][v], 6),
    slope: round(a.stats.slope[side][v]),
    extentMm: round(a.extent[side][v]),
    boundaryMm: round(a.boundary[side][v]),
  });
  const views: ViewReport[] = [];
  for (let v = 0; v < a.nViews; v++) {
    const r: ViewReport = { view: v, left: edge(0, v), right: edge(1, v) };
    if (mass) r.missingMass = round(mass.missing[v], 6);
    views.push(r);
  }
  const summary = summarize(a);
  return {
    views, threshold: a.threshold, noiseSigma: a.noiseSigma,
    truncatedFraction: summary.truncatedFraction, leftFraction: summary.leftFraction, rightFraction: summary.rightFraction,
    summary, muWater: a.mu, muAssumed: a.muAssumed, fitChannels: a.fitChannels, smoothingViews: a.smoothingViews,
    mass: mass ? summarizeMass(mass) : { unavailable: why! },
  };
}
