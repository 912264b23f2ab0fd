// The reconstruction volume a cone-beam recipe uses when it names none.
import { coneFovHalfHeight } from '../geometry/cone';
import { fovRadius } from '../geometry/view-vectors';
import type { Scan } from '../scan';
import { checkVolumeGrid, type VolumeGrid } from '../volume';
import type { GridChoice, SliceChoice } from './recipe';

/** Default voxels along x and y for volumes (a 512^2 x 400 volume would take 400 MB). */
export const DEFAULT_VOLUME_SIZE = 256;

/**
 * The volume for a cone-beam scan: the recipe's choices, or DEFAULT_VOLUME_SIZE voxels across
 * the measured field of view with a 10% margin; slices as thick as the voxels are wide,
 * covering the height every view measures on the axis, also with a 10% margin.
 */
export function chooseVolumeGrid(scan: Scan, grid?: GridChoice, slices?: SliceChoice): VolumeGrid {
  const g = scan.geometry;
  const r = fovRadius(g);
  const size = grid?.size ?? DEFAULT_VOLUME_SIZE;
  const pixel = grid?.pixel ?? (r > 0 ? (2.2 * r) / size : 1);
  const spacing = slices?.spacing ?? pixel;
  const h = coneFovHalfHeight(g);
  const nz = slices?.slices ?? Math.max(1, Math.ceil((2.2 * h) / spacing));
  return checkVolumeGrid({ nx: size, ny: size, nz, dx: pixel, dy: pixel, dz: spacing, cx: 0, cy: 0, cz: 0 });
}
