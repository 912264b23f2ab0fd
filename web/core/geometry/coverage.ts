// Angular coverage of a circular scan: what FBP weighting and the FOV depend on.
import type { Geometry } from './types';
import { anglesRad } from './types';

/**
 * Angular range covered by the views, radians: the span between the first and last angle plus
 * one mean step (each view stands for an interval of that width). Calibrated scans without
 * angles report NaN.
 */
export function angularCoverage(g: Geometry): number {
  if (!g.anglesDeg) return NaN;
  const b = anglesRad(g);
  if (b.length < 2) return 0;
  const span = Math.abs(b[b.length - 1] - b[0]);
  return span + span / (b.length - 1);
}

/** True when the views cover a full turn (within half a step). */
export function isFullScan(g: Geometry): boolean {
  const b = g.anglesDeg ? anglesRad(g) : null;
  if (!b || b.length < 2) return false;
  const step = Math.abs(b[b.length - 1] - b[0]) / (b.length - 1);
  return angularCoverage(g) >= 2 * Math.PI - step / 2;
}
