// The exact line integral of a solid phantom along one ray, summed solid by solid (density x
// chord; REFERENCES.md [ellipsoid-chord]): a plain reference for the simulated projections, one
// ray at a time through the engine's own chord (scaledChord) in each solid's frame.
import { scaledChord, solidFrame, type Solid, type SolidPhantom } from '../../web/core/phantoms/solid';

/** Exact line integral of the phantom along a ray (unit direction). */
export function solidLineIntegral(p: SolidPhantom, origin: readonly number[], d: readonly number[]): number {
  let sum = 0;
  for (const e of p.solids) sum += e.value * solidChord(e, origin, d);
  return sum;
}

/** Length (mm) of the part of the ray p + t d (|d| = 1) inside solid e. */
export function solidChord(e: Solid, p: readonly number[], d: readonly number[]): number {
  const { co, si } = solidFrame(e);
  const rx = p[0] - e.cx, ry = p[1] - e.cy;
  return scaledChord(
    e.shape,
    (co * rx + si * ry) / e.a, (-si * rx + co * ry) / e.b, (p[2] - e.cz) / e.c,
    (co * d[0] + si * d[1]) / e.a, (-si * d[0] + co * d[1]) / e.b, d[2] / e.c,
  );
}
