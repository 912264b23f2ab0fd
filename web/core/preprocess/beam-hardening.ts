// Water beam-hardening correction: each line integral p becomes sum_k c_k p^k (k = 1..n), a
// polynomial fitted so that water of any thickness gives line integrals linear in thickness
// (water precorrection; e.g. M. Kachelriess, K. Sourbelle, W. A. Kalender, "Empirical cupping
// correction", Med. Phys. 33(5):1269-1274, 2006 — citation from memory).
import { InputError } from '../errors';

/** Checks polynomial coefficients [c1, c2, ...] (no constant term). */
export function checkWaterPolynomial(c: unknown): number[] {
  if (!Array.isArray(c) || c.length < 1 || c.length > 8 || c.some((x) => typeof x !== 'number' || !Number.isFinite(x))) {
    throw new InputError(`beam-hardening polynomial: got ${JSON.stringify(c)?.slice(0, 60)}, expected 1 to 8 finite coefficients [c1, c2, ...] of p, p^2, ...`);
  }
  if (c[0] <= 0) throw new InputError(`beam-hardening polynomial c1: got ${c[0]}, expected a positive linear coefficient`);
  return c as number[];
}

/** Applies p -> sum_k c_k p^k in place (Horner's scheme). */
export function applyWaterPolynomial(p: Float32Array, coefficients: number[]): void {
  const c = coefficients;
  for (let i = 0; i < p.length; i++) {
    const x = p[i];
    let s = 0;
    for (let k = c.length - 1; k >= 0; k--) s = s * x + c[k];
    p[i] = s * x;
  }
}
