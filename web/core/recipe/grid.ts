// The reconstruction grid a recipe uses when it names none.
import { fovRadius } from '../geometry/view-vectors';
import { squareGrid, type ImageGrid } from '../image';
import type { Scan } from '../scan';
import { analyseEdges, objectRadius } from '../truncation/edges';
import type { GridChoice } from './recipe';

/** Default pixels along each axis. */
export const DEFAULT_GRID_SIZE = 512;

/** Margin around the covered radius. */
const MARGIN = 1.1;

/**
 * Radius (mm) the default grid covers: the measured field of view, or the estimated object
 * (truncation analysis, so that structures outside the field of view can appear) when it is
 * larger. 2D scans only; other scans get the field of view.
 */
export function coveredRadius(scan: Scan, objectRadiusMm?: number): number {
  const fov = fovRadius(scan.geometry);
  const g = scan.geometry;
  const is2d = g.kind !== 'cone' && g.detector.rows === 1;
  const object = objectRadiusMm ?? (is2d ? objectRadius(analyseEdges(scan)) : 0);
  return Math.max(fov, object);
}

/**
 * The grid for a scan: the recipe's choice, or DEFAULT_GRID_SIZE pixels covering
 * coveredRadius with a 10% margin; for fan beams the grid's corners stay inside the source
 * circle. `objectRadiusMm` skips the analysis when the caller has it.
 */
export function chooseGrid(scan: Scan, choice?: GridChoice, objectRadiusMm?: number): ImageGrid {
  if (choice) return squareGrid(choice.size, choice.pixel);
  let half = MARGIN * coveredRadius(scan, objectRadiusMm);
  const R = scan.geometry.sourceIsocenter;
  if (scan.geometry.kind !== 'parallel' && R) half = Math.min(half, (0.95 * R) / Math.SQRT2);
  const size = DEFAULT_GRID_SIZE;
  return squareGrid(size, half > 0 ? (2 * half) / size : 1);
}
