// Redundancy weights of a full-turn scan with a displaced (asymmetric) detector, the usual way
// to widen the field of view of a C-arm or lab scanner: rays near the centre are measured from
// both sides of the turn, rays beyond the nearer detector edge only once. Instead of the 1/2 of
// a symmetric full scan, each ray gets w(x) with w(x) + w(-x) = 1 (x and -x are conjugate rays:
// u and -u for parallel beams, gamma and -gamma for fan beams), rising smoothly across the
// overlap |x| <= h from 0 at the short edge to 1 at the other side:
//   w(x) = sin^2(pi/4 (1 + x/h)) for |x| <= h, 1 beyond on the long side, 0 beyond on the short one
// (G. Wang, "X-ray micro-CT with a displaced detector array", Med. Phys. 29(7):1634-1636, 2002;
// the sin^2 transition is from memory, its defining property w(x) + w(-x) = 1 is tested).
// The weighted projection falls smoothly to zero at the short edge, so that edge needs no
// extrapolation.

export interface DisplacedDetector {
  /** Half-width h of the overlap (coordinate of the nearer edge, >= 0). */
  half: number;
  /** +1 when the detector reaches further on the positive side, -1 otherwise. */
  longSide: 1 | -1;
}

/**
 * The displacement of a detector whose outer edges sit at coordinates x0 < x1 (fan angle or
 * u), or undefined when it is symmetric within `tolerance` (a full scan then weights 1/2).
 */
export function displacement(x0: number, x1: number, tolerance: number): DisplacedDetector | undefined {
  if (Math.abs(x0 + x1) <= tolerance) return undefined;
  const longSide = x1 + x0 > 0 ? 1 : -1;
  return { half: Math.max(0, Math.min(-x0, x1)), longSide };
}

/** Redundancy weight of the ray at coordinate x. */
export function displacedDetectorWeight(x: number, d: DisplacedDetector): number {
  const t = d.longSide * x;
  if (t >= d.half) return 1;
  if (t <= -d.half) return 0;
  return Math.sin((Math.PI / 4) * (1 + t / d.half)) ** 2;
}
