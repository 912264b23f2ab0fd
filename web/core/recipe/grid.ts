// The reconstruction grid a recipe uses when it names none.
import { fovRadius } from '../geometry/view-vectors';
import { squareGrid, type ImageGrid } from '../image';
import type { Scan } from '../scan';
import type { GridChoice } from './recipe';

/** Default pixels along each axis. */
export const DEFAULT_GRID_SIZE = 512;

/**
 * The grid for a scan: the recipe's choice, or DEFAULT_GRID_SIZE pixels covering the measured
 * field of view with a 10% margin.
 */
export function chooseGrid(scan: Scan, choice?: GridChoice): ImageGrid {
  if (choice) return squareGrid(choice.size, choice.pixel);
  const r = fovRadius(scan.geometry);
  const size = DEFAULT_GRID_SIZE;
  return squareGrid(size, r > 0 ? (2.2 * r) / size : 1);
}
