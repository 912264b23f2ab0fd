// A circular (or already calibrated) geometry written out as calibrated per-view vectors, the
// form a scanner's calibration gives (DEVELOPERS.md, "Geometry"): the same scan, described view
// by view. Used to check that both descriptions reconstruct alike, and to send FDK down its
// general backprojector (a panel leaning out of the orbit plane) on a circular scan.
import type { Geometry, ViewVectorSpec } from './types';
import { validateGeometry } from './validate';
import { viewVectors, VIEW_STRIDE } from './view-vectors';

type Vec3 = [number, number, number];

function scaled(v: Vec3, length: number): Vec3 {
  const n = Math.hypot(...v);
  return [(v[0] / n) * length, (v[1] / n) * length, (v[2] / n) * length];
}

/**
 * `g` with its views as calibrated vectors (steps as long as the pitches). `lean` tilts every
 * view's channel step out of the xy plane by that slope (0: the same orbit exactly).
 */
export function asCalibratedViews(g: Geometry, lean = 0): Geometry {
  const t = viewVectors(g);
  const [pu, pv] = g.detector.pitch;
  const views = Array.from({ length: t.length / VIEW_STRIDE }, (_, i): ViewVectorSpec => {
    const at = (k: number) => Array.from(t.subarray(i * VIEW_STRIDE + k, i * VIEW_STRIDE + k + 3)) as Vec3;
    const u = at(6);
    u[2] = lean * Math.hypot(u[0], u[1]);
    return { focalSpot: at(0), detectorCenter: at(3), channelStep: scaled(u, pu), rowStep: scaled(at(9), pv) };
  });
  return validateGeometry({ kind: g.kind, detector: g.detector, sourceIsocenter: g.sourceIsocenter, sourceDetector: g.sourceDetector, views });
}
