// Planning the detector extension of a cone-beam scan row by row: every detector row, taken over
// all views, is analysed as a fan-beam scan (central-row.ts, edges.ts) with the water-cylinder
// fits of that row's tilt, the tail lengths are smoothed across views (as in 2D) and then across
// neighbouring rows, and each row gets the 2D planner's tails (extension-plan.ts). One channel
// layout serves every row (the longest tail on each side), so FDK filters one extended detector.
import { extendDetector } from '../geometry/presets';
import type { Geometry } from '../geometry/types';
import { viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import { coneFrame } from '../geometry/cone';
import { throwIfCancelled } from '../errors';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { centralRowScan, rowGeometry, rowScan, rowSecant } from './central-row';
import type { PerSide } from './edge-stats';
import { analyseEdges, ASSUMED_MU_WATER, objectRadius, smoothAcrossViews, withTailLengths, type EdgeAnalysis } from './edges';
import { EXTEND_CODES, EXTEND_DESCRIPTIONS, EXTEND_PARAMS, type ExtendMethod } from './extend-methods';
import { channelsForReach, extendedLayout, longestTails, planTails, tailParams, type DetectorExtension } from './extension-plan';

/**
 * Height at the isocentre (mm) over which tail lengths are smoothed on each side of a row:
 * rows a few mm apart see nearly the same section of a body, while single rows can be thrown
 * by a rib edge or noise (common practice: smooth the fits as Hsieh et al. 2004 do across views).
 */
export const ROW_SMOOTHING_MM = 5;

export interface ConeExtensionSummary {
  method: Exclude<ExtendMethod, 'none'>;
  source: string;
  rows: number;
  /** Rows on each side of a row whose tail lengths are smoothed together. */
  smoothingRows: number;
  /** Rows cut off in at least one view. */
  truncatedRows: number;
  channelsAdded: { left: number; right: number };
  extendedChannels: number;
  meanTailMm: { left: number; right: number };
  maxTailMm: { left: number; right: number };
  /** Not applied to cone beams: tilted rows are not planar fan scans, whose view totals would agree. */
  massBasis: 'unavailable';
  objectRadiusMm: number;
  muWater: number;
  muAssumed: boolean;
}

/** A cone-beam scan's extension: one parameter block per (view, row), view-major like the projections. */
export interface ConeExtensionPlan extends DetectorExtension {
  method: Exclude<ExtendMethod, 'none'>;
  rows: number;
  views: number;
  /** The extended detector's geometry (extendDetector). */
  geometry: Geometry;
  /** Radius of a cylinder about the rotation axis holding the estimated object, mm. */
  objectRadius: number;
  /** The same radius as each detector row estimates it, mm. */
  rowRadius: Float64Array;
  summary: ConeExtensionSummary;
}

/** Source-to-detector and source-to-isocentre distances of the first view, mm. */
function distances(g: Geometry): { D: number; R: number } {
  const f = coneFrame(viewVectors(g).subarray(0, VIEW_STRIDE), 0);
  return { D: f.dist, R: f.r };
}

/** Rows on each side over which ROW_SMOOTHING_MM reaches (v is magnified by D / R at the detector). */
function smoothingRows(g: Geometry): number {
  const { D, R } = distances(g);
  return Math.max(1, Math.round((ROW_SMOOTHING_MM * D) / R / g.detector.pitch[1]));
}

/** Rows analysed between checks for a cancel (and progress reports). */
const ROWS_PER_TURN = 16;

/**
 * Edge analysis of every detector row, fits with mu times the row's secant (rowSecant). Yields
 * to the event loop every ROWS_PER_TURN rows so that a cancel is heard.
 */
async function analyseRows(scan: Scan, mu: number, hooks: RunHooks): Promise<EdgeAnalysis[]> {
  const g = scan.geometry;
  const { D } = distances(g);
  const rows: EdgeAnalysis[] = [];
  for (let r = 0; r < g.detector.rows; r++) {
    if (r % ROWS_PER_TURN === 0) {
      await new Promise((resolve) => setTimeout(resolve, 0));
      throwIfCancelled(hooks.signal);
      hooks.onProgress?.(r / g.detector.rows, 'analysing the detector edges');
    }
    rows.push(analyseEdges(rowScan(scan, r), { mu: mu * rowSecant(g, r, D) }));
  }
  return rows;
}

/** Each row's tail lengths smoothed across neighbouring rows (per view and side, cut-off rows only). */
function smoothAcrossRows(rows: EdgeAnalysis[], half: number): EdgeAnalysis[] {
  const nRows = rows.length, nViews = rows[0].nViews;
  const lengths = rows.map(() => [new Float64Array(nViews), new Float64Array(nViews)] as PerSide<Float64Array>);
  const x = new Float64Array(nRows), valid = new Uint8Array(nRows);
  for (const side of [0, 1] as const) {
    for (let v = 0; v < nViews; v++) {
      for (let r = 0; r < nRows; r++) {
        x[r] = rows[r].extent[side][v];
        valid[r] = rows[r].truncated[side][v];
      }
      const smooth = smoothAcrossViews(x, valid, half, false);
      for (let r = 0; r < nRows; r++) lengths[r][side][v] = smooth[r];
    }
  }
  return rows.map((a, r) => withTailLengths(a, lengths[r]));
}

/**
 * Radius (mm) of a cylinder about the axis holding the object as the central detector row
 * estimates it (for the default volume grid when no extension is planned).
 */
export function coneObjectRadius(scan: Scan): number {
  return objectRadius(analyseEdges(centralRowScan(scan)));
}

/**
 * Plans the extension of every detector row of a cone-beam scan by `method`. Reports progress
 * and honours a cancel between rows.
 */
export async function planConeExtension(scan: Scan, method: Exclude<ExtendMethod, 'none'>, hooks: RunHooks = {}): Promise<ConeExtensionPlan> {
  const g = scan.geometry;
  const nRows = g.detector.rows;
  const mu = scan.muWater ?? ASSUMED_MU_WATER;
  const half = smoothingRows(g);
  const rows = smoothAcrossRows(await analyseRows(scan, mu, hooks), half);
  const nViews = rows[0].nViews;
  const params = new Float32Array(nViews * nRows * EXTEND_PARAMS);
  const reach = [0, 0] as PerSide<number>;
  const sum = [0, 0], count = [0, 0];
  const rowRadius = new Float64Array(nRows);
  let truncatedRows = 0;
  for (let r = 0; r < nRows; r++) {
    const a = rows[r];
    // Mass consistency is not applied (null): see ConeExtensionSummary.massBasis.
    const tails = planTails(rowScan(scan, r), method, a, null);
    tailParams(method, a, tails, params, nRows, r);
    const longest = longestTails(tails);
    for (const side of [0, 1] as const) {
      reach[side] = Math.max(reach[side], longest[side]);
      for (let v = 0; v < nViews; v++) {
        if (!a.truncated[side][v]) continue;
        sum[side] += tails.lengths[side][v];
        count[side]++;
      }
    }
    if (a.truncated[0].some((t) => t) || a.truncated[1].some((t) => t)) truncatedRows++;
    rowRadius[r] = objectRadius(a);
  }
  const radius = rowRadius.reduce((x, y) => Math.max(x, y), 0);
  const { left, right } = channelsForReach(rowGeometry(g), rows[0], reach);
  const { coord } = extendedLayout(rowGeometry(g), left, right);
  const mean = (side: 0 | 1) => (count[side] ? sum[side] / count[side] : 0);
  return {
    method, left, right, code: EXTEND_CODES[method], params, coord, rows: nRows, views: nViews,
    geometry: extendDetector(g, left, right), objectRadius: radius, rowRadius,
    summary: {
      method, source: EXTEND_DESCRIPTIONS[method], rows: nRows, smoothingRows: half, truncatedRows,
      channelsAdded: { left, right }, extendedChannels: coord.length,
      meanTailMm: { left: mean(0), right: mean(1) }, maxTailMm: { left: reach[0], right: reach[1] },
      massBasis: 'unavailable', objectRadiusMm: radius, muWater: mu, muAssumed: scan.muWater === undefined,
    },
  };
}
