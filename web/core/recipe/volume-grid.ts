// The reconstruction volume a cone-beam recipe uses when it names none.
import { coneFovHalfHeight } from '../geometry/cone';
import { coneObjectRadius } from '../truncation/cone-extension';
import { fovRadius } from '../geometry/view-vectors';
import type { Geometry } from '../geometry/types';
import type { Scan } from '../scan';
import { checkVolumeGrid, type VolumeGrid } from '../volume';
import type { GridChoice, SliceChoice } from './recipe';

/** Default voxels along x and y for volumes (a 512^2 x 400 volume would take 400 MB). */
export const DEFAULT_VOLUME_SIZE = 256;

/** Margin around the covered radius and height. */
const MARGIN = 1.1;

/**
 * The volume for a cone-beam scan: the recipe's choices, or DEFAULT_VOLUME_SIZE voxels across
 * the measured field of view or, when larger, the object as estimated from the truncated edges
 * (as chooseGrid does in 2D), with a 10% margin and the corners inside the source circle;
 * slices as thick as the voxels are wide, covering the height every view measures on the axis,
 * also with a 10% margin. `objectRadiusMm` (a value, or how to get it when needed) skips the
 * edge analysis of `scan`; a geometry alone needs it.
 */
export function chooseVolumeGrid(scan: Scan | Geometry, grid?: GridChoice, slices?: SliceChoice, objectRadiusMm?: number | (() => number)): VolumeGrid {
  const g = 'geometry' in scan ? scan.geometry : scan;
  const size = grid?.size ?? DEFAULT_VOLUME_SIZE;
  let pixel = grid?.pixel;
  if (pixel === undefined) {
    const estimate = typeof objectRadiusMm === 'function' ? objectRadiusMm() : objectRadiusMm ?? coneObjectRadius(scan as Scan);
    const covered = Math.max(fovRadius(g), estimate);
    const half = Math.min(MARGIN * covered, (0.95 * (g.sourceIsocenter ?? Infinity)) / Math.SQRT2);
    pixel = half > 0 ? (2 * half) / size : 1;
  }
  const spacing = slices?.spacing ?? pixel;
  const h = coneFovHalfHeight(g);
  const nz = slices?.slices ?? Math.max(1, Math.ceil((2 * MARGIN * h) / spacing));
  return checkVolumeGrid({ nx: size, ny: size, nz, dx: pixel, dy: pixel, dz: spacing, cx: 0, cy: 0, cz: 0 });
}
