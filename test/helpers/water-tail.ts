// The water-cylinder tail as a formula (Hsieh et al. 2004; REFERENCES.md [hsieh-2004]): the
// value 2 mu sqrt(R^2 - q^2) a fitted CylinderTail gives at an outward distance, for tests of
// the fit and of the kernel's tails.
import type { CylinderTail } from '../../web/core/truncation/water-fit';

/** Tail value at outward distance delta (mm). */
export function tailValue(t: CylinderTail, delta: number): number {
  const q = t.inset + delta / t.stretch;
  const r2 = t.radius * t.radius - q * q;
  return r2 > 0 && delta >= 0 ? 2 * t.mu * Math.sqrt(r2) : 0;
}
