// The measured line integral of a chord. A chord through a point of the field of view is itself a
// measured ray (every line through the field of view is measured): its value is interpolated
// from the views on either side of the chord's direction (parallel) or of the source positions
// the chord passes through (fan), linearly between views and channels, and averaged over the
// times the scan measured it.
import type { Geometry } from '../geometry/types';
import { firstChannelU, KernelKind, VIEW_STRIDE } from '../geometry/view-vectors';

export interface SinogramView {
  data: Float32Array;
  views: Float32Array;
  kind: number;
  nCh: number;
  u0: number;
  pitch: number;
}

/** Detector coordinate (mm) of the ray of view v through point (px, py). */
export function detectorCoordinate(views: Float32Array, kind: number, v: number, px: number, py: number): number {
  const b = v * VIEW_STRIDE;
  const ax = views[b], ay = views[b + 1], cx = views[b + 3], cy = views[b + 4];
  const ul = Math.hypot(views[b + 6], views[b + 7]);
  const ux = views[b + 6] / ul, uy = views[b + 7] / ul;
  if (kind === KernelKind.parallel) return (px - cx) * ux + (py - cy) * uy;
  const dist = Math.hypot(cx - ax, cy - ay);
  const nx = (cx - ax) / dist, ny = (cy - ay) / dist;
  const ln = (px - ax) * nx + (py - ay) * ny, lu = (px - ax) * ux + (py - ay) * uy;
  return kind === KernelKind.fanCurved ? dist * Math.atan(lu / ln) : (dist * lu) / ln;
}

/** Linear interpolation of view v at detector coordinate u; undefined off the detector. */
function sampleView(s: SinogramView, v: number, u: number): number | undefined {
  const f = (u - s.u0) / s.pitch;
  if (!(f >= 0 && f <= s.nCh - 1)) return undefined;
  if (s.nCh === 1) return s.data[v];
  const k = Math.min(Math.floor(f), s.nCh - 2), t = f - k;
  const row = v * s.nCh;
  return s.data[row + k] * (1 - t) + s.data[row + k + 1] * t;
}

/**
 * Line integral along the line through (px, py) with unit direction (ex, ey), from the scan;
 * undefined when no view measures it.
 */
export function chordLineIntegral(s: SinogramView, px: number, py: number, ex: number, ey: number): number | undefined {
  const n = s.views.length / VIEW_STRIDE;
  // Which side of the chord a view lies on: the ray direction (parallel) or the source (fan).
  const side = (v: number) => {
    const b = v * VIEW_STRIDE;
    if (s.kind === KernelKind.parallel) return s.views[b] * ey - s.views[b + 1] * ex;
    return ex * (s.views[b + 1] - py) - ey * (s.views[b] - px);
  };
  // Angle of a view (parallel: modulo a half turn) and the largest gap between neighbours that
  // still counts as neighbouring (a short scan's wrap-around gap does not).
  const angle = (v: number) => {
    const b = v * VIEW_STRIDE;
    const t = Math.atan2(s.views[b + 1], s.views[b]);
    return s.kind === KernelKind.parallel ? ((t % Math.PI) + Math.PI) % Math.PI : t;
  };
  const period = s.kind === KernelKind.parallel ? Math.PI : 2 * Math.PI;
  const gap = (v: number, w: number) => {
    const d = Math.abs(angle(w) - angle(v)) % period;
    return Math.min(d, period - d);
  };
  const maxGap = 2.5 * (n > 1 ? gap(0, 1) : Math.PI);
  let sum = 0, count = 0;
  for (let v = 0; v < n; v++) {
    const w = (v + 1) % n;
    if (w === v || gap(v, w) > maxGap) continue;
    // A parallel scan's last view may face the first one's opposite way (a half turn apart):
    // the same lines, with the side of the chord flipped.
    const bv = v * VIEW_STRIDE, bw = w * VIEW_STRIDE;
    const opposite = s.kind === KernelKind.parallel && s.views[bv] * s.views[bw] + s.views[bv + 1] * s.views[bw + 1] < 0;
    const a = side(v), b = opposite ? -side(w) : side(w);
    if (!(a === 0 || a * b < 0)) continue;
    const f = a === 0 ? 0 : a / (a - b);
    const sa = sampleView(s, v, detectorCoordinate(s.views, s.kind, v, px, py));
    const sb = sampleView(s, w, detectorCoordinate(s.views, s.kind, w, px, py));
    if (sa === undefined || sb === undefined) continue;
    sum += sa * (1 - f) + sb * f;
    count++;
  }
  return count ? sum / count : undefined;
}

/** The pieces of a scan chordLineIntegral reads. */
export function sinogramView(data: Float32Array, views: Float32Array, kind: number, g: Geometry): SinogramView {
  return { data, views, kind, nCh: g.detector.channels, u0: firstChannelU(g), pitch: g.detector.pitch[0] };
}
