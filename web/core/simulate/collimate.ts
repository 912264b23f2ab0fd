// Collimation of a simulated scan to a centred region: which channels see it.
import { InputError } from '../errors';
import type { Geometry } from '../geometry/types';
import { rayCoordinates } from '../truncation/ray-coords';

/**
 * Number of central channels whose rays pass within a centred circle of `diameterMm` (mm at
 * the isocentre): the channels with |s| <= diameter / 2, s the ray's distance from the
 * isocentre (parallel: s = u; fan: s = R sin gamma).
 */
export function collimatedChannels(g: Geometry, diameterMm: number): number {
  const rays = rayCoordinates(g);
  const radius = diameterMm / 2;
  if (!(radius > 0) || (rays.form !== 'parallel' && radius >= rays.sourceIsocenter)) {
    throw new InputError(`collimation: got a ${diameterMm} mm region, expected a diameter above 0${rays.form !== 'parallel' ? ` and below ${2 * rays.sourceIsocenter} mm (the source circle)` : ''}`);
  }
  const uEdge = Math.abs(rays.u(radius));
  const n = Math.floor((2 * uEdge) / g.detector.pitch[0]) + 1;
  if (n > g.detector.channels) {
    throw new InputError(`collimation: a ${diameterMm} mm region needs ${n} channels, more than the detector's ${g.detector.channels}`);
  }
  return Math.max(1, n);
}
