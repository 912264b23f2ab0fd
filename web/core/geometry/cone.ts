// Cone-beam specifics derived from the per-view vectors (view-vectors.ts stays the one place
// that turns a geometry into coordinates): rays through detector cells, the measured field of
// view along z, and the cone angle.
import { InputError } from '../errors';
import type { Geometry } from './types';
import { firstChannelU, firstRowV, viewVectors, VIEW_STRIDE } from './view-vectors';

/**
 * Throws InputError unless the geometry is a cone beam whose every view has the isocentre in
 * front of the source (calibrated views could place it behind).
 */
export function requireCone(g: Geometry): void {
  if (g.kind !== 'cone') throw new InputError(`geometry.kind: got "${g.kind}", expected "cone" (a multi-row cone-beam scan)`);
  const views = viewVectors(g);
  for (let v = 0; v < views.length / VIEW_STRIDE; v++) {
    const f = coneFrame(views, v);
    if (!(f.r > 0) || !(f.dist > f.r)) {
      throw new InputError(`geometry view ${v}: the isocentre lies ${f.r.toFixed(1)} mm from the source along the central ray and the detector ${f.dist.toFixed(1)} mm, expected 0 < isocentre < detector`);
    }
  }
}

/** The frame of one view: source S, unit central ray n, unit detector axes U and V, |C - S|, R = -S.n. */
export interface ConeFrame {
  s: [number, number, number];
  c: [number, number, number];
  n: [number, number, number];
  u: [number, number, number];
  v: [number, number, number];
  /** Source to detector centre, mm. */
  dist: number;
  /** Source to isocentre along the central ray, mm. */
  r: number;
}

function unit(x: number, y: number, z: number): [number, number, number] {
  const l = Math.hypot(x, y, z);
  return [x / l, y / l, z / l];
}

/** Frame of view v from a view table (the same normalization the kernels apply). */
export function coneFrame(views: Float32Array, v: number): ConeFrame {
  const b = v * VIEW_STRIDE;
  const s: [number, number, number] = [views[b], views[b + 1], views[b + 2]];
  const c: [number, number, number] = [views[b + 3], views[b + 4], views[b + 5]];
  const dist = Math.hypot(c[0] - s[0], c[1] - s[1], c[2] - s[2]);
  const n = unit(c[0] - s[0], c[1] - s[1], c[2] - s[2]);
  return {
    s, c, n, dist,
    u: unit(views[b + 6], views[b + 7], views[b + 8]),
    v: unit(views[b + 9], views[b + 10], views[b + 11]),
    r: -(s[0] * n[0] + s[1] * n[1] + s[2] * n[2]),
  };
}

/** A ray in space: a point on it and its unit direction, mm. */
export interface Ray3D {
  p: [number, number, number];
  d: [number, number, number];
}

/** The ray from the source of frame f to the detector point (u, v) (mm on the detector). */
export function coneRay(f: ConeFrame, u: number, v: number): Ray3D {
  const q = [0, 1, 2].map((i) => f.c[i] + u * f.u[i] + v * f.v[i] - f.s[i]);
  return { p: f.s, d: unit(q[0], q[1], q[2]) };
}

/** Detector coordinates (u, v) where the ray from the source through point p lands, or null behind the source. */
export function projectPoint(f: ConeFrame, p: readonly number[]): { u: number; v: number } | null {
  const w = [p[0] - f.s[0], p[1] - f.s[1], p[2] - f.s[2]];
  const ln = w[0] * f.n[0] + w[1] * f.n[1] + w[2] * f.n[2];
  if (!(ln > 1e-9)) return null;
  return {
    u: (f.dist * (w[0] * f.u[0] + w[1] * f.u[1] + w[2] * f.u[2])) / ln,
    v: (f.dist * (w[0] * f.v[0] + w[1] * f.v[1] + w[2] * f.v[2])) / ln,
  };
}

/** Detector edges (outer cell borders), mm: [uLow, uHigh, vLow, vHigh]. */
export function detectorEdges(g: Geometry): [number, number, number, number] {
  const d = g.detector;
  const u0 = firstChannelU(g) - d.pitch[0] / 2;
  const v0 = firstRowV(g) - d.pitch[1] / 2;
  return [u0, u0 + d.channels * d.pitch[0], v0, v0 + d.rows * d.pitch[1]];
}

/**
 * Largest angle between a ray and the plane perpendicular to the detector's v axis, over the
 * detector corners of every view, radians (the cone half-angle of a centred circular scan).
 */
export function maxConeAngle(g: Geometry): number {
  const views = viewVectors(g);
  const [ua, ub, va, vb] = detectorEdges(g);
  let worst = 0;
  for (let v = 0; v < views.length / VIEW_STRIDE; v++) {
    const f = coneFrame(views, v);
    for (const u of [ua, ub]) {
      for (const w of [va, vb]) {
        const r = coneRay(f, u, w);
        const along = r.d[0] * f.v[0] + r.d[1] * f.v[1] + r.d[2] * f.v[2];
        worst = Math.max(worst, Math.asin(Math.min(1, Math.abs(along))));
      }
    }
  }
  return worst;
}

/**
 * Half height (mm) of the region that every view measures, at distance `radius` from the
 * rotation axis: a point at height z is seen by a view when z (D / (R - radius)) stays on the
 * detector rows, worst case the view whose source is nearest. Zero when the central plane is
 * not measured.
 */
export function coneFovHalfHeight(g: Geometry, radius = 0): number {
  const views = viewVectors(g);
  const [, , va, vb] = detectorEdges(g);
  if (va >= 0 || vb <= 0) return 0;
  let h = Infinity;
  for (let v = 0; v < views.length / VIEW_STRIDE; v++) {
    const f = coneFrame(views, v);
    h = Math.min(h, (Math.min(-va, vb) * Math.max(0, f.r - radius)) / f.dist);
  }
  return h;
}
