// The exact line integral of a solid phantom along one ray, summed solid by solid (density x
// chord; REFERENCES.md [ellipsoid-chord]): a plain reference for the simulated projections.
import { solidChord, type SolidPhantom } from '../../web/core/phantoms/solid';

/** Exact line integral of the phantom along a ray (unit direction). */
export function solidLineIntegral(p: SolidPhantom, origin: readonly number[], d: readonly number[]): number {
  let sum = 0;
  for (const e of p.solids) sum += e.value * solidChord(e, origin, d);
  return sum;
}
