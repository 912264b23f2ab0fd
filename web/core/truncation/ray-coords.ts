// The ray coordinate s of a detector channel: the signed distance of its ray from the
// isocentre, mm. Truncation is judged and extrapolated in s because a cylinder about the
// isocentre projects to 2 mu sqrt(r^2 - s^2) in every geometry: s = u for parallel beams and
// s = R sin(gamma) for fan beams (gamma the fan angle, R the source-to-isocentre distance),
// which is also the parallel-beam coordinate t of the fan ray after rebinning
// (REFERENCES.md [helgason-ludwig]: theta = beta - gamma, t = R sin gamma in this project's
// convention).
import type { Geometry } from '../geometry/types';
import { firstChannelU, kernelKind, KernelKind, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';

export interface RayCoordinates {
  /** 'parallel', 'flat' (fan, flat detector) or 'curved' (fan, equiangular detector). */
  readonly form: 'parallel' | 'flat' | 'curved';
  /** Source-to-isocentre distance R, mm (Infinity for parallel beams). */
  readonly sourceIsocenter: number;
  /** Source-to-detector distance D, mm (unused for parallel beams). */
  readonly sourceDetector: number;
  /** s of the ray at detector coordinate u (mm). */
  s(u: number): number;
  /** Detector coordinate u of the ray at s (|s| < R for fan beams). */
  u(s: number): number;
  /** ds/du at u. */
  dsdu(u: number): number;
  /** Fan angle gamma of detector coordinate u (0 for parallel beams), radians. */
  gamma(u: number): number;
}

/**
 * Ray coordinates of a 2D geometry. R and D come from the first view of the view table
 * (R = -S.n, D = |C - S|, as the FBP weights take them), so calibrated circular scans work too.
 */
export function rayCoordinates(g: Geometry): RayCoordinates {
  const kind = kernelKind(g);
  if (kind === KernelKind.parallel) {
    return { form: 'parallel', sourceIsocenter: Infinity, sourceDetector: NaN, s: (u) => u, u: (s) => s, dsdu: () => 1, gamma: () => 0 };
  }
  const v = viewVectors(firstViewOnly(g)).subarray(0, VIEW_STRIDE);
  const nx = v[3] - v[0], ny = v[4] - v[1];
  const D = Math.hypot(nx, ny);
  const R = -(v[0] * nx + v[1] * ny) / D;
  if (kind === KernelKind.fanCurved) {
    return {
      form: 'curved', sourceIsocenter: R, sourceDetector: D,
      s: (u) => R * Math.sin(u / D),
      u: (s) => D * Math.asin(Math.max(-1, Math.min(1, s / R))),
      dsdu: (u) => (R / D) * Math.cos(u / D),
      gamma: (u) => u / D,
    };
  }
  return {
    form: 'flat', sourceIsocenter: R, sourceDetector: D,
    s: (u) => (R * u) / Math.hypot(D, u),
    u: (s) => {
      const x = Math.max(-0.999999, Math.min(0.999999, s / R));
      return (D * x) / Math.sqrt(1 - x * x);
    },
    dsdu: (u) => (R * D * D) / (D * D + u * u) ** 1.5,
    gamma: (u) => Math.atan(u / D),
  };
}

/** The geometry reduced to its first view (the distances R and D are read from it). */
function firstViewOnly(g: Geometry): Geometry {
  if (g.views) return { ...g, views: g.views.slice(0, 1), anglesDeg: undefined };
  const a = g.anglesDeg!;
  return { ...g, anglesDeg: [Array.isArray(a) ? a[0] : a.start] };
}

/** s of every channel of the geometry's detector, mm. */
export function channelS(g: Geometry, rc = rayCoordinates(g)): Float64Array {
  const u0 = firstChannelU(g), p = g.detector.pitch[0];
  return Float64Array.from({ length: g.detector.channels }, (_, k) => rc.s(u0 + k * p));
}

/** Width of every channel in s (ds/du times the pitch), mm: the weights of a sum over s. */
export function channelWidthS(g: Geometry, rc = rayCoordinates(g)): Float64Array {
  const u0 = firstChannelU(g), p = g.detector.pitch[0];
  return Float64Array.from({ length: g.detector.channels }, (_, k) => rc.dsdu(u0 + k * p) * p);
}
