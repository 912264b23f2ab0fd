// Exact cone-beam projections of solid phantoms, ray by ray from the view table: for every view,
// row and channel, the sum over solids of density x chord (REFERENCES.md [ellipsoid-chord]). Each solid only
// visits the detector rectangle that holds the projection of its bounding box (the perspective
// image of a box lies in the hull of its projected corners), so small solids cost little.
import { throwIfCancelled } from '../errors';
import { coneFrame, projectPoint, requireCone, type ConeFrame } from '../geometry/cone';
import type { Geometry } from '../geometry/types';
import { firstChannelU, firstRowV, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import { scaledChord, solidBounds, solidFrame, type Solid, type SolidPhantom } from '../phantoms/solid';
import type { RunHooks } from '../run-hooks';

/** Channel and row ranges [k0, k1] x [r0, r1] the solid can reach in this view. */
function footprint(f: ConeFrame, e: Solid, g: Geometry, u0: number, v0: number): [number, number, number, number] {
  const d = g.detector;
  const all: [number, number, number, number] = [0, d.channels - 1, 0, d.rows - 1];
  const [xa, xb, ya, yb, za, zb] = solidBounds(e);
  let ua = Infinity, ub = -Infinity, va = Infinity, vb = -Infinity;
  for (let c = 0; c < 8; c++) {
    const q = projectPoint(f, [c & 1 ? xb : xa, c & 2 ? yb : ya, c & 4 ? zb : za]);
    if (!q) return all;
    ua = Math.min(ua, q.u); ub = Math.max(ub, q.u);
    va = Math.min(va, q.v); vb = Math.max(vb, q.v);
  }
  const [pu, pv] = d.pitch;
  return [
    Math.max(0, Math.floor((ua - u0) / pu) - 1), Math.min(d.channels - 1, Math.ceil((ub - u0) / pu) + 1),
    Math.max(0, Math.floor((va - v0) / pv) - 1), Math.min(d.rows - 1, Math.ceil((vb - v0) / pv) + 1),
  ];
}

/**
 * Line integrals of the phantom for every view, row and channel ([view][row][channel]). With
 * `subsamples` s > 1 each detector cell averages s x s rays spread over its area.
 * Yields to the event loop between views so that hooks.signal can cancel it.
 */
export async function analyticConeProjections(p: SolidPhantom, g: Geometry, subsamples = 1, hooks: RunHooks = {}): Promise<Float32Array> {
  requireCone(g);
  const views = viewVectors(g);
  const nViews = views.length / VIEW_STRIDE;
  const { channels: nCh, rows: nRows, pitch: [pu, pv] } = g.detector;
  const u0 = firstChannelU(g), v0 = firstRowV(g);
  const out = new Float32Array(nViews * nRows * nCh);
  const s = subsamples;
  const frames = p.solids.map(solidFrame);
  for (let v = 0; v < nViews; v++) {
    if (v % 8 === 0) {
      await new Promise((resolve) => setTimeout(resolve, 0));
      throwIfCancelled(hooks.signal);
      hooks.onProgress?.(v / nViews, 'projections');
    }
    const f = coneFrame(views, v);
    p.solids.forEach((e, i) => {
      const { co, si, a, b, c } = frames[i];
      // The source in the solid's scaled frame.
      const rx = f.s[0] - e.cx, ry = f.s[1] - e.cy;
      const qx = (co * rx + si * ry) / a, qy = (-si * rx + co * ry) / b, qz = (f.s[2] - e.cz) / c;
      const [k0, k1, r0, r1] = footprint(f, e, g, u0, v0);
      for (let r = r0; r <= r1; r++) {
        const row = (v * nRows + r) * nCh;
        for (let k = k0; k <= k1; k++) {
          let acc = 0;
          for (let sb = 0; sb < s; sb++) {
            const w = v0 + (r - 0.5 + (sb + 0.5) / s) * pv;
            for (let sa = 0; sa < s; sa++) {
              const u = u0 + (k - 0.5 + (sa + 0.5) / s) * pu;
              let dx = f.c[0] + u * f.u[0] + w * f.v[0] - f.s[0];
              let dy = f.c[1] + u * f.u[1] + w * f.v[1] - f.s[1];
              let dz = f.c[2] + u * f.u[2] + w * f.v[2] - f.s[2];
              const l = Math.hypot(dx, dy, dz);
              dx /= l; dy /= l; dz /= l;
              acc += scaledChord(e.shape, qx, qy, qz, (co * dx + si * dy) / a, (-si * dx + co * dy) / b, dz / c);
            }
          }
          out[row + k] += (e.value * acc) / (s * s);
        }
      }
    });
  }
  hooks.onProgress?.(1, 'projections');
  return out;
}
