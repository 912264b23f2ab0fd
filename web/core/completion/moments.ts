// The Helgason-Ludwig conditions of order 0 and 1 (S. Helgason 1965; D. Ludwig, Commun. Pure
// Appl. Math. 19:49-81, 1966; REFERENCES.md [helgason-ludwig]) for parallel views over a full
// turn: with p_theta(s) the projection at angle theta (rays along -(cos theta, sin theta), s
// along n = (-sin theta, cos theta)),
//   int p_theta(s) ds     = M                                   (the object's mass)
//   int p_theta(s) s ds   = M (-x_c sin theta + y_c cos theta)  (its centroid (x_c, y_c))
// for every theta. A truncated view measures only |s| <= S; its tails must make up the rest.
import type { ParallelDomain } from './parallel-domain';

/** The object's mass (line integral x mm, = int int mu dx dy) and centroid (mm). */
export interface ObjectMoments {
  mass: number;
  cx: number;
  cy: number;
}

export interface MeasuredMoments {
  /** int over the measured channels of p ds, per view. */
  m0: Float64Array;
  /** int over the measured channels of p s ds, per view. */
  m1: Float64Array;
}

export function measuredMoments(pd: ParallelDomain): MeasuredMoments {
  const n = 2 * pd.half + 1;
  const m0 = new Float64Array(pd.nViews), m1 = new Float64Array(pd.nViews);
  for (let j = 0; j < pd.nViews; j++) {
    let a = 0, b = 0;
    for (let k = 0; k < n; k++) {
      const p = pd.data[j * n + k], s = (k - pd.half) * pd.ds;
      a += p;
      b += p * s;
    }
    m0[j] = a * pd.ds;
    m1[j] = b * pd.ds;
  }
  return { m0, m1 };
}

/** First moment of view theta predicted by the object's moments. */
export function firstMomentAt(o: ObjectMoments, theta: number): number {
  return o.mass * (-o.cx * Math.sin(theta) + o.cy * Math.cos(theta));
}

/**
 * Mass and centroid from complete per-view moments (mass m0, first moment m1 per view, views
 * evenly spread over a full turn): the mean of m0 and the first harmonic of m1.
 */
export function objectMomentsFrom(angles: Float64Array, m0: ArrayLike<number>, m1: ArrayLike<number>, mass?: number): ObjectMoments {
  const n = angles.length;
  let mean = 0, c = 0, s = 0;
  for (let j = 0; j < n; j++) {
    mean += m0[j] / n;
    c += (2 * m1[j] * Math.cos(angles[j])) / n;
    s += (2 * m1[j] * Math.sin(angles[j])) / n;
  }
  const M = mass ?? mean;
  return { mass: M, cx: M > 0 ? -s / M : 0, cy: M > 0 ? c / M : 0 };
}

/** Relative RMS departure of per-view masses and first moments from the conditions (for reports and tests). */
export function hlDeparture(angles: Float64Array, m0: ArrayLike<number>, m1: ArrayLike<number>): { order0: number; order1: number } {
  const o = objectMomentsFrom(angles, m0, m1);
  let r0 = 0, r1 = 0, n1 = 0;
  for (let j = 0; j < angles.length; j++) {
    r0 += (m0[j] - o.mass) ** 2;
    const f = firstMomentAt(o, angles[j]);
    r1 += (m1[j] - f) ** 2;
    n1 += m1[j] ** 2;
  }
  return { order0: Math.sqrt(r0 / angles.length) / Math.abs(o.mass || 1), order1: n1 > 0 ? Math.sqrt(r1 / n1) : 0 };
}
