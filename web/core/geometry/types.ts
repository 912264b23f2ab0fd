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

export type Vec3 = [number, number, number];

/**
 * One calibrated view, vectors in mm in the world frame (isocentre at the origin). Fan and cone
 * beams give the focal spot; parallel beams give the ray direction instead (unit length after
 * validation). `channelStep` and `rowStep` go from one detector channel (row) to the next, so
 * their lengths are the detector pitch.
 */
export interface ViewVectorSpec {
  /** Focal spot position (fan and cone beams). */
  focalSpot?: Vec3;
  /** Direction the rays travel (parallel beams). */
  rayDirection?: Vec3;
  /** Centre of the detector (channel and row coordinates 0). */
  detectorCenter: Vec3;
  /** From one channel to the next (length = channel pitch). */
  channelStep: Vec3;
  /** From one row to the next (length = row pitch). */
  rowStep: Vec3;
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
