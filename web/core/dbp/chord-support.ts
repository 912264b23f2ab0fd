// Where the object may lie along a chord: the stretch of the chord inside the outline (the
// object's support, Defrise, Noo, Clackdoyle & Kudo 2006, REFERENCES.md [defrise2006]), or inside
// a disk about the isocentre (the object's reach estimated from the data, or the field of view
// itself when no view is truncated).
import { gridOrigin, type ImageGrid } from '../image';
import { outlineContains, type Outline } from '../knowledge';
import { diskInterval, type Interval } from './chords';

/** March step when looking for the outline's edge, mm, and the farthest reach searched. */
const MARCH_MM = 1;
const MAX_REACH_MM = 2000;

/** Support along chords through (cx, cy): a function of the chord direction. */
export type SupportFn = (ex: number, ey: number) => Interval;

/** The disk of radius r about the isocentre. */
export function diskSupport(cx: number, cy: number, r: number): SupportFn {
  return (ex, ey) => diskInterval(cx, cy, ex, ey, r) ?? [0, 0];
}

/** Distance from (cx, cy) along (dx, dy) to where `inside` first turns false, mm. */
function exitDistance(inside: (x: number, y: number) => boolean, cx: number, cy: number, dx: number, dy: number): number {
  let lo = 0, hi = MARCH_MM;
  while (hi < MAX_REACH_MM && inside(cx + hi * dx, cy + hi * dy)) { lo = hi; hi += MARCH_MM; }
  for (let k = 0; k < 20; k++) {
    const mid = (lo + hi) / 2;
    if (inside(cx + mid * dx, cy + mid * dy)) lo = mid;
    else hi = mid;
  }
  return lo;
}

/**
 * The outline's stretch of each chord through (cx, cy). A mask outline is read from its raster on
 * `grid` (outside the grid counts as outside the outline).
 */
export function outlineSupport(outline: Outline, mask: Uint8Array | undefined, grid: ImageGrid, cx: number, cy: number): SupportFn {
  let inside: (x: number, y: number) => boolean;
  if (outline.shape === 'mask') {
    const { x0, y0 } = gridOrigin(grid);
    inside = (x, y) => {
      const i = Math.round((x - x0) / grid.dx), j = Math.round((y - y0) / grid.dy);
      return i >= 0 && j >= 0 && i < grid.nx && j < grid.ny && mask![j * grid.nx + i] === 1;
    };
  } else {
    inside = (x, y) => outlineContains(outline, x, y);
  }
  return (ex, ey) => [-exitDistance(inside, cx, cy, -ex, -ey), exitDistance(inside, cx, cy, ex, ey)];
}
