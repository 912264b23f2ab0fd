// Plain-words descriptions of scans for lists and reports.
import { viewCount, type Geometry } from '../../core/geometry/types';
import { describeReduction, type Reduction } from '../../core/reduction';
import { fovRadius } from '../../core/geometry/view-vectors';

/** Angular range covered by the views, degrees (circular model), or undefined for calibrated views. */
export function angularRange(g: Geometry): number | undefined {
  const a = g.anglesDeg;
  if (!a || g.views) return undefined;
  if (Array.isArray(a)) return a.length > 1 ? Math.abs(a[a.length - 1] - a[0]) * (a.length / (a.length - 1)) : 0;
  return Math.abs(a.step * a.count);
}

const trim = (v: number) => String(Number(v.toPrecision(4)));

/** "Fan beam, flat detector 345 × 1 mm, 720 views over 360°, source 600 mm / detector 1000 mm". */
export function geometrySummary(g: Geometry): string {
  const d = g.detector;
  const beam = g.kind === 'parallel' ? 'Parallel beam' : g.kind === 'fan' ? 'Fan beam' : 'Cone beam';
  const det = `${d.shape} detector ${d.channels}${d.rows > 1 ? ` × ${d.rows}` : ''} × ${trim(d.pitch[0])} mm`;
  const range = angularRange(g);
  const views = `${viewCount(g)} views${range !== undefined ? ` over ${trim(range)}°` : ' (calibrated)'}`;
  const dist = g.kind === 'parallel' ? '' : `, source ${trim(g.sourceIsocenter!)} mm / detector ${trim(g.sourceDetector!)} mm from the source`;
  return `${beam}, ${det}, ${views}${dist}`;
}

/** Radius of the measured field of view, mm (one decimal). */
export function fovSummary(g: Geometry): string {
  try {
    return `${fovRadius(g).toFixed(1)} mm`;
  } catch (err) {
    return `unknown (${err instanceof Error ? err.message : String(err)})`;
  }
}

/** The scan in one line: its geometry and, when it was reduced on import, how and from what. */
export function scanSummary(meta: { geometry: Geometry; reduction?: { applied: Reduction; from: { channels: number; rows: number; views: number } } }): string {
  const r = meta.reduction;
  const from = r ? `; imported with ${describeReduction(r.applied)} from ${r.from.channels} × ${r.from.rows} cells, ${r.from.views} views` : '';
  return `${geometrySummary(meta.geometry)}${from}`;
}
