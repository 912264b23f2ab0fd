/**
 * Scan geometry as stored in files (DEVELOPERS.md, "Geometry"): mm and degrees.
 * web/core/geometry is the one owner of geometry: everything else consumes the per-view
 * vectors it produces (view-vectors.ts).
 */

export type GeometryKind = 'parallel' | 'fan' | 'cone';
export type DetectorShape = 'flat' | 'curved';

export interface DetectorSpec {
  /** flat: channel coordinate in mm on the detector plane; curved: arc length at radius sourceDetector. */
  shape: DetectorShape;
  channels: number;
  rows: number;
  /** [pitch along u (channels), pitch along v (rows)], mm. */
  pitch: [number, number];
  /** [offset along u, offset along v], mm: shifts every channel / row coordinate. */
  offset: [number, number];
}

/** Evenly spaced angles, degrees. */
export interface AngleRange {
  start: number;
  step: number;
  count: number;
}

/** One calibrated view: vectors in mm. For parallel beams `source` is the unit ray direction. */
export interface ViewVectorSpec {
  source: [number, number, number];
  detector: [number, number, number];
  u: [number, number, number];
  v: [number, number, number];
}

export interface Geometry {
  kind: GeometryKind;
  detector: DetectorSpec;
  /** Source to isocentre distance, mm (fan and cone). */
  sourceIsocenter?: number;
  /** Source to detector distance, mm (fan and cone). */
  sourceDetector?: number;
  /** View angles: a range or an explicit list, degrees. */
  anglesDeg?: AngleRange | number[];
  /** Calibrated per-view vectors; when present they override the circular model. */
  views?: ViewVectorSpec[];
}

/** Number of views a (validated) geometry describes. */
export function viewCount(g: Geometry): number {
  if (g.views) return g.views.length;
  const a = g.anglesDeg!;
  return Array.isArray(a) ? a.length : a.count;
}

/** View angles in radians (circular model). Throws for calibrated geometries without angles. */
export function anglesRad(g: Geometry): Float64Array {
  const a = g.anglesDeg;
  if (!a) throw new Error('geometry has no angles (calibrated views only)');
  const out = new Float64Array(Array.isArray(a) ? a.length : a.count);
  for (let i = 0; i < out.length; i++) {
    const deg = Array.isArray(a) ? a[i] : a.start + i * a.step;
    out[i] = (deg * Math.PI) / 180;
  }
  return out;
}
