// The undetermined mask of a DBP result as an NRRD image on the result's grid (1 = not
// determined), readable again as a mask (no rimfill.quantity: neither mu nor HU).
import { writeNrrd } from '../formats/nrrd';
import type { ImageGrid } from '../image';

export function writeUndeterminedNrrd(grid: ImageGrid, mask: Uint8Array): Promise<Uint8Array> {
  const x0 = grid.cx - ((grid.nx - 1) / 2) * grid.dx, y0 = grid.cy - ((grid.ny - 1) / 2) * grid.dy;
  return writeNrrd(Float32Array.from(mask), [grid.nx, grid.ny], {
    'space dimension': '2',
    'space directions': `(${grid.dx},0) (0,${grid.dy})`,
    'space origin': `(${x0},${y0})`,
    'space units': '"mm" "mm"',
  }, { 'rimfill.content': 'undetermined' }, false);
}
