// Geometries used across engine tests.
import type { Geometry } from '../../web/core/geometry/types';
import { validateGeometry } from '../../web/core/geometry/validate';

export function parallel(channels = 256, pitch = 1, views = 180, spanDeg = 180): Geometry {
  return validateGeometry({ kind: 'parallel', detector: { shape: 'flat', channels, rows: 1, pitch: [pitch, 1], offset: [0, 0] }, anglesDeg: { start: 0, step: spanDeg / views, count: views } });
}

export function fanFlat(channels = 384, pitch = 1.0, views = 360, spanDeg = 360, offset = 0): Geometry {
  return validateGeometry({ kind: 'fan', detector: { shape: 'flat', channels, rows: 1, pitch: [pitch, 1], offset: [offset, 0] }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: spanDeg / views, count: views } });
}

export function fanCurved(channels = 384, pitch = 1.0, views = 360, spanDeg = 360): Geometry {
  return validateGeometry({ kind: 'fan', detector: { shape: 'curved', channels, rows: 1, pitch: [pitch, 1], offset: [0, 0] }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: spanDeg / views, count: views } });
}
