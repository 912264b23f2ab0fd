// Water cylinder extrapolation (J. Hsieh, E. Chao, J. Thibault, B. Grekowicz, A. Horst,
// S. McOlash, T. J. Myers, "A novel reconstruction algorithm to extend the CT scan
// field-of-view", Med. Phys. 31(9):2385-2391, 2004; maths in REFERENCES.md [hsieh-2004]).
//
// Beyond a truncated edge the missing projection is modelled as the projection of a water
// cylinder that matches the measured edge value p_e and outward slope g. In the outward
// distance delta >= 0 from the edge (mm in the ray coordinate s), with the cylinder centre a
// distance d inside the edge:
//   p(delta) = 2 mu sqrt(R^2 - (d + delta / a)^2),   0 <= delta <= L = a (R - d)
//   d = -g p_e / (4 mu^2),   R = sqrt(d^2 + p_e^2 / (4 mu^2))
// a = 1 is Hsieh's circle; a stretch a != 1 (an elliptic cylinder with the same edge value)
// lets the tail meet a smoothed length or the mass consistency condition.

/** A water-cylinder tail beyond one edge (mm, 1/mm). */
export interface CylinderTail {
  /** mu of the cylinder, 1/mm. */
  mu: number;
  /** Cylinder radius R, mm (0: no tail). */
  radius: number;
  /** Distance d from the edge inwards to the cylinder centre, mm (>= 0 once constrained). */
  inset: number;
  /** Horizontal stretch a of the tail (1: a circle). */
  stretch: number;
}

export const NO_TAIL: CylinderTail = { mu: 0, radius: 0, inset: 0, stretch: 1 };

/** Hsieh's unconstrained fit to edge value pe and outward slope (1/mm). d < 0 when the edge rises outwards. */
export function fitCylinder(pe: number, outwardSlope: number, mu: number): { radius: number; inset: number } {
  const inset = (-outwardSlope * pe) / (4 * mu * mu);
  const h = pe / (2 * mu);
  return { radius: Math.sqrt(inset * inset + h * h), inset };
}

/** Tail length L = a (R - d), mm. */
export function tailLength(t: CylinderTail): number {
  return t.radius > 0 ? t.stretch * (t.radius - t.inset) : 0;
}

/**
 * The cylinder through the edge value pe whose tail has length L: with h = pe / (2 mu) the
 * half chord at the edge, R^2 - d^2 = h^2 and R - d = L give R = (L + h^2/L) / 2 and
 * d = (h^2/L - L) / 2. Physical constraint d >= 0 (the profile does not rise beyond the edge):
 * a tail longer than h is a stretched quarter circle (d = 0, R = h, a = L / h).
 */
export function cylinderWithLength(pe: number, length: number, mu: number): CylinderTail {
  if (!(pe > 0) || !(length > 0)) return NO_TAIL;
  const h = pe / (2 * mu);
  if (length <= h) return { mu, radius: (length + (h * h) / length) / 2, inset: ((h * h) / length - length) / 2, stretch: 1 };
  return { mu, radius: h, inset: 0, stretch: length / h };
}

/**
 * Hsieh's fit under the physical constraints: a tail that would rise beyond the edge (d < 0,
 * an edge slope pointing outwards up) is replaced by the cylinder centred on the edge (d = 0,
 * the flattest physically plausible profile), and the tail is no longer than maxLength.
 */
export function constrainedCylinder(pe: number, outwardSlope: number, mu: number, maxLength: number): CylinderTail {
  if (!(pe > 0)) return NO_TAIL;
  const fit = fitCylinder(pe, outwardSlope, mu);
  const inset = Math.max(0, fit.inset);
  const radius = Math.sqrt(inset * inset + (pe / (2 * mu)) ** 2);
  const length = radius - inset;
  return length > maxLength ? cylinderWithLength(pe, maxLength, mu) : { mu, radius, inset, stretch: 1 };
}

/**
 * Area under the tail, mm (line integral x mm): a times the circular segment integral
 * int_d^R 2 mu sqrt(R^2 - x^2) dx = mu (R^2 (pi/2 - asin(d/R)) - d sqrt(R^2 - d^2)).
 */
export function tailArea(t: CylinderTail): number {
  const { radius: R, inset: d } = t;
  if (!(R > 0)) return 0;
  const x = Math.min(1, Math.max(-1, d / R));
  return t.stretch * t.mu * (R * R * (Math.PI / 2 - Math.asin(x)) - d * Math.sqrt(Math.max(0, R * R - d * d)));
}
