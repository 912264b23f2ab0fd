// A displaced detector (full turn, one side reaching further than the other) needs zero
// channels on its short side out to the mirror of its long edge: displaced-detector weighting
// (recon/displaced-detector.ts) takes the weighted data smoothly to zero at the short edge, but
// the ramp-filtered rows do not end there, and pixels of the outer field of view read them in
// the views that see them through the short side.
import { isFullScan } from '../geometry/coverage';
import type { Geometry } from '../geometry/types';
import { firstChannelU } from '../geometry/view-vectors';

/** Channels to add on each side (u = -u mirrors a ray to its conjugate's detector position). */
export function displacedDetectorMargin(g: Geometry): { left: number; right: number } {
  const p = g.detector.pitch[0];
  const u0 = firstChannelU(g), u1 = u0 + (g.detector.channels - 1) * p;
  if (!isFullScan(g) || Math.abs(u0 + u1) <= p) return { left: 0, right: 0 };
  return { left: Math.max(0, Math.ceil((u0 + u1) / p)), right: Math.max(0, Math.ceil(-(u0 + u1) / p)) };
}
