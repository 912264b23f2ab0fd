// Plain TypeScript DBP at a list of points: the reference the engine kernel is tested against.
import { KernelKind, VIEW_STRIDE } from '../geometry/view-vectors';

/**
 * Backprojects `deriv` (nViews x nCh, dbpDerivative) onto points (x, y, ex, ey) with per-point
 * chord direction e: H_e f at each point (see derivative.ts for the formula).
 */
export function dbpPointsReference(points: Float32Array, views: Float32Array, kind: number, deriv: Float32Array, nCh: number, u0: number, pitch: number): Float32Array {
  const nPts = points.length / 4, nViews = views.length / VIEW_STRIDE;
  const out = new Float32Array(nPts);
  for (let p = 0; p < nPts; p++) {
    const x = points[4 * p], y = points[4 * p + 1], ex = points[4 * p + 2], ey = points[4 * p + 3];
    let acc = 0;
    for (let v = 0; v < nViews; v++) {
      const b = v * VIEW_STRIDE;
      const ax = views[b], ay = views[b + 1], cx = views[b + 3], cy = views[b + 4];
      const ul = Math.hypot(views[b + 6], views[b + 7]);
      const ux = views[b + 6] / ul, uy = views[b + 7] / ul;
      let u: number, weight: number;
      if (kind === KernelKind.parallel) {
        u = (x - cx) * ux + (y - cy) * uy;
        weight = Math.sign(ux * ex + uy * ey);
      } else {
        const dist = Math.hypot(cx - ax, cy - ay);
        const nx = (cx - ax) / dist, ny = (cy - ay) / dist;
        const rx = x - ax, ry = y - ay;
        const ln = rx * nx + ry * ny, lu = rx * ux + ry * uy;
        u = kind === KernelKind.fanCurved ? dist * Math.atan(lu / ln) : (dist * lu) / ln;
        weight = Math.sign(rx * ey - ry * ex) / Math.hypot(rx, ry);
      }
      const f = (u - u0) / pitch;
      if (!(f >= 0 && f <= nCh - 1)) continue;
      const k = Math.min(Math.floor(f), nCh - 2), t = f - k;
      const row = v * nCh;
      acc += weight * (nCh === 1 ? deriv[row] : deriv[row + k] * (1 - t) + deriv[row + k + 1] * t);
    }
    out[p] = acc;
  }
  return out;
}
