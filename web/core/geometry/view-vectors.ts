// Per-view vectors: the one place where a geometry becomes coordinates (DEVELOPERS.md, "Geometry"). Kernels,
// analytic phantoms and page overlays all consume these tables.
import type { Geometry } from './types';
import { anglesRad, viewCount } from './types';
import { isFullScan } from './coverage';

/**
 * Floats per view: [a(3), detectorCentre(3), u(3), v(3)] (matches assembly/abi.ts VIEW_STRIDE):
 * a is the focal spot (fan, cone) or the ray direction (parallel); u and v point along the
 * channels and the rows (the kernels use their directions; pitches come from the detector).
 */
export const VIEW_STRIDE = 12;

/** Kernel geometry kind codes (match assembly/abi.ts). */
export const KernelKind = { parallel: 0, fanFlat: 1, fanCurved: 2, coneFlat: 3 } as const;

/**
 * View table for a validated geometry, mm. For fan and cone beams `a` is the source position
 * `(R cos b, R sin b, 0)`, the detector centre is `-(D - R)(cos b, sin b, 0)`, u points along
 * `(-sin b, cos b, 0)` and v along +z. For parallel beams `a` is the unit ray direction
 * `-(cos b, sin b, 0)` and the detector centre is the isocentre. Calibrated `views` are copied
 * (focalSpot or rayDirection, detectorCenter, channelStep, rowStep).
 */
export function viewVectors(g: Geometry): Float32Array {
  const n = viewCount(g);
  const out = new Float32Array(n * VIEW_STRIDE);
  if (g.views) {
    g.views.forEach((w, i) => { out.set([...(w.focalSpot ?? w.rayDirection!), ...w.detectorCenter, ...w.channelStep, ...w.rowStep], i * VIEW_STRIDE); });
    return out;
  }
  const beta = anglesRad(g);
  const R = g.sourceIsocenter ?? 0;
  const D = g.sourceDetector ?? 0;
  for (let i = 0; i < n; i++) {
    const c = Math.cos(beta[i]);
    const s = Math.sin(beta[i]);
    const a = g.kind === 'parallel' ? [-c, -s, 0] : [R * c, R * s, 0];
    const det = g.kind === 'parallel' ? [0, 0, 0] : [-(D - R) * c, -(D - R) * s, 0];
    out.set([...a, ...det, -s, c, 0, 0, 0, 1], i * VIEW_STRIDE);
  }
  return out;
}

/** Kernel kind code for a geometry. */
export function kernelKind(g: Geometry): number {
  if (g.kind === 'parallel') return KernelKind.parallel;
  if (g.kind === 'cone') return KernelKind.coneFlat;
  return g.detector.shape === 'curved' ? KernelKind.fanCurved : KernelKind.fanFlat;
}

/** Coordinate of channel 0 along u, mm: `-(n-1)/2 * pitch + offset` (DEVELOPERS.md, "Geometry"). */
export function firstChannelU(g: Geometry): number {
  const d = g.detector;
  return -((d.channels - 1) / 2) * d.pitch[0] + d.offset[0];
}

/** Coordinate of row 0 along v, mm. */
export function firstRowV(g: Geometry): number {
  const d = g.detector;
  return -((d.rows - 1) / 2) * d.pitch[1] + d.offset[1];
}

/** A ray in the plane: a point on it and its unit direction (mm). */
export interface Ray2D {
  px: number;
  py: number;
  dx: number;
  dy: number;
}

/**
 * The ray of view `v` at detector coordinate `u` (mm; arc length for curved detectors), from
 * the view table. Mirrors the kernels' ray model (assembly/rays.ts); used by analytic phantoms.
 */
export function rayAt(views: Float32Array, v: number, kind: number, u: number): Ray2D {
  const b = v * VIEW_STRIDE;
  const ax = views[b], ay = views[b + 1];
  const cx = views[b + 3], cy = views[b + 4];
  const ul = Math.hypot(views[b + 6], views[b + 7]);
  const ux = views[b + 6] / ul, uy = views[b + 7] / ul;
  let px: number, py: number, qx: number, qy: number;
  if (kind === KernelKind.parallel) {
    px = cx + u * ux; py = cy + u * uy; qx = ax; qy = ay;
  } else if (kind === KernelKind.fanCurved) {
    const dist = Math.hypot(cx - ax, cy - ay);
    const nx = (cx - ax) / dist, ny = (cy - ay) / dist;
    const g = u / dist;
    px = ax; py = ay;
    qx = Math.cos(g) * nx + Math.sin(g) * ux;
    qy = Math.cos(g) * ny + Math.sin(g) * uy;
  } else {
    px = ax; py = ay; qx = cx + u * ux - ax; qy = cy + u * uy - ay;
  }
  const ql = Math.hypot(qx, qy);
  return { px, py, dx: qx / ql, dy: qy / ql };
}

/**
 * Radius of the measured field of view, mm: the largest circle about the isocentre in which
 * every line is measured. A full turn measures each line from both sides, so an offset
 * detector covers out to its farther edge; shorter scans only to the nearer edge.
 */
export function fovRadius(g: Geometry): number {
  const d = g.detector;
  const u0 = firstChannelU(g) - d.pitch[0] / 2;
  const u1 = u0 + d.channels * d.pitch[0];
  const reach = (u: number): number => {
    if (g.kind === 'parallel') return Math.abs(u);
    const R = g.sourceIsocenter!, D = g.sourceDetector!;
    const gamma = d.shape === 'curved' ? u / D : Math.atan(u / D);
    return R * Math.abs(Math.sin(gamma));
  };
  if (u0 >= 0 || u1 <= 0) return 0; // the central ray is not measured
  return isFullScan(g) ? Math.max(reach(u0), reach(u1)) : Math.min(reach(u0), reach(u1));
}
