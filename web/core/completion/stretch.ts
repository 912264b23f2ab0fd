// Stretching each view's two tails to meet the Helgason-Ludwig conditions (moments.ts) for
// given object moments. With S the edge position, A and F a base tail's area and first moment
// about its edge, a stretch a gives the tail area a A and first moment (about s = 0)
// +-(S a A + a^2 F).
//   Order 0 only (stretchToMass): one factor per view, a = (M - m0) / (A_L + A_R).
//   Orders 0 and 1 (stretchToMoments): per view
//     a_L A_L + a_R A_R                                   = M - m0          (missing mass)
//     (S a_R A_R + a_R^2 F_R) - (S a_L A_L + a_L^2 F_L)   = M c(theta) - m1 (missing first moment)
//   Eliminating a_L leaves one equation in a_R that rises monotonically on [0, (M - m0) / A_R]:
//   bisection finds its root, or the nearer end when the conditions cannot both hold with
//   non-negative tails (the mass is then still met).
import type { DomainTails } from './domain-tails';
import { firstMomentAt, type MeasuredMoments, type ObjectMoments } from './moments';
import type { ParallelDomain } from './parallel-domain';

/**
 * Shortest stretch of a tail: a base tail already meets its edge's value and slope, and one
 * squeezed towards nothing would bring back the jump at the edge that extension removes
 * (the bright rim). A view whose conditions ask for less keeps a quarter of its base tail.
 */
export const MIN_STRETCH = 0.25;

function solveView(S: number, D0: number, D1: number, AL: number, AR: number, FL: number, FR: number): [number, number] {
  if (!(D0 > 0)) return [0, 0];
  if (!(AL > 0) && !(AR > 0)) return [0, 0];
  if (!(AL > 0)) return [0, D0 / AR];
  if (!(AR > 0)) return [D0 / AL, 0];
  const f = (aR: number) => {
    const aL = (D0 - aR * AR) / AL;
    return S * aR * AR + aR * aR * FR - S * aL * AL - aL * aL * FL - D1;
  };
  let lo = 0, hi = D0 / AR;
  const flo = f(lo), fhi = f(hi);
  let aR: number;
  if (flo >= 0) aR = lo;
  else if (fhi <= 0) aR = hi;
  else {
    for (let i = 0; i < 60; i++) {
      const mid = (lo + hi) / 2;
      if (f(mid) < 0) lo = mid;
      else hi = mid;
    }
    aR = (lo + hi) / 2;
  }
  return [Math.max(0, (D0 - aR * AR) / AL), aR];
}

/**
 * Sets t.stretch for object moments `o`: every view's tails carry the view's missing mass and
 * first moment, each stretch at most maxStretch (per view and side, or one number).
 */
export function stretchToMoments(pd: ParallelDomain, t: DomainTails, measured: MeasuredMoments, o: ObjectMoments, maxStretch: number | Float64Array): void {
  const S = pd.half * pd.ds;
  for (let j = 0; j < pd.nViews; j++) {
    const D0 = o.mass - measured.m0[j];
    const D1 = firstMomentAt(o, pd.angles[j]) - measured.m1[j];
    const [aL, aR] = solveView(S, D0, D1, t.area[2 * j], t.area[2 * j + 1], t.moment[2 * j], t.moment[2 * j + 1]);
    const capL = typeof maxStretch === 'number' ? maxStretch : maxStretch[2 * j];
    const capR = typeof maxStretch === 'number' ? maxStretch : maxStretch[2 * j + 1];
    t.stretch[2 * j] = Math.min(Math.max(aL, MIN_STRETCH), capL);
    t.stretch[2 * j + 1] = Math.min(Math.max(aR, MIN_STRETCH), capR);
  }
}

/** Per-view mass and first moment of the completed views (measured + stretched tails). */
export function completedMoments(pd: ParallelDomain, t: DomainTails, measured: MeasuredMoments): { m0: Float64Array; m1: Float64Array } {
  const S = pd.half * pd.ds;
  const m0 = Float64Array.from(measured.m0), m1 = Float64Array.from(measured.m1);
  for (let j = 0; j < pd.nViews; j++) {
    for (const side of [0, 1] as const) {
      const i = 2 * j + side, a = t.stretch[i];
      const area = a * t.area[i], first = S * a * t.area[i] + a * a * t.moment[i];
      m0[j] += area;
      m1[j] += side === 0 ? -first : first;
    }
  }
  return { m0, m1 };
}

/** Only the order-0 condition: both tails of a view scaled by one factor so the view carries the missing mass. */
export function stretchToMass(pd: ParallelDomain, t: DomainTails, measured: MeasuredMoments, mass: number, maxStretch: Float64Array): void {
  for (let j = 0; j < pd.nViews; j++) {
    const A = t.area[2 * j] + t.area[2 * j + 1];
    const a = A > 0 ? Math.max(MIN_STRETCH, (mass - measured.m0[j]) / A) : 0;
    t.stretch[2 * j] = Math.min(a, maxStretch[2 * j]);
    t.stretch[2 * j + 1] = Math.min(a, maxStretch[2 * j + 1]);
  }
}

