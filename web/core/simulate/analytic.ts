// Exact projections of ellipse phantoms for any 2D geometry, ray by ray from the view table.
import type { Geometry } from '../geometry/types';
import { firstChannelU, kernelKind, rayAt, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import { lineIntegral, type EllipsePhantom } from '../phantoms/ellipse';
import { require2d } from '../recon/projector';

/**
 * Line integrals of the phantom for every view and channel ([view][channel]). With
 * `subsamples` > 1 each channel averages that many rays spread over its width (a detector
 * element integrates over its aperture); 1 samples the channel centre.
 */
export function analyticSinogram(p: EllipsePhantom, g: Geometry, subsamples = 1): Float32Array {
  require2d(g);
  const views = viewVectors(g);
  const kind = kernelKind(g);
  const nViews = views.length / VIEW_STRIDE;
  const nCh = g.detector.channels;
  const pitch = g.detector.pitch[0];
  const u0 = firstChannelU(g);
  const out = new Float32Array(nViews * nCh);
  for (let v = 0; v < nViews; v++) {
    for (let k = 0; k < nCh; k++) {
      let acc = 0;
      for (let s = 0; s < subsamples; s++) {
        const u = u0 + (k - 0.5 + (s + 0.5) / subsamples) * pitch;
        const r = rayAt(views, v, kind, u);
        acc += lineIntegral(p, r.px, r.py, r.dx, r.dy);
      }
      out[v * nCh + k] = acc / subsamples;
    }
  }
  return out;
}
