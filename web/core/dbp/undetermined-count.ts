// How much of an image a DBP result leaves undetermined: over the whole grid and inside the
// measured field of view (a disk about the isocentre), counted on pixel centres. The run's report,
// the page's read-outs and its printed report all count the same way.
import { gridOrigin, type ImageGrid } from '../image';

export interface UndeterminedCount {
  /** Pixels marked not determined, and pixels of the grid. */
  pixels: number;
  total: number;
  /** The same inside the field of view (pixel centres within `fovRadius` of the isocentre). */
  insideFov: number;
  fovPixels: number;
}

/** Counts the marked pixels of `mask` (1 = not determined, x fastest) on `grid`; `fovRadius` in mm (0: no field). */
export function countUndetermined(mask: Uint8Array, grid: ImageGrid, fovRadius: number): UndeterminedCount {
  const { x0, y0 } = gridOrigin(grid);
  const r2 = fovRadius * fovRadius;
  let pixels = 0, insideFov = 0, fovPixels = 0;
  for (let j = 0; j < grid.ny; j++) {
    const y = y0 + j * grid.dy;
    for (let i = 0; i < grid.nx; i++) {
      const x = x0 + i * grid.dx;
      const inside = x * x + y * y <= r2;
      const marked = mask[j * grid.nx + i] === 1;
      if (inside) fovPixels++;
      if (marked) { pixels++; if (inside) insideFov++; }
    }
  }
  return { pixels, total: grid.nx * grid.ny, insideFov, fovPixels };
}

/** The counts in words: "12.5% of the image (0.0% of the field of view)". */
export function undeterminedWords(c: UndeterminedCount): string {
  const pct = (a: number, b: number) => `${b ? ((100 * a) / b).toFixed(1) : '0.0'}%`;
  return `${pct(c.pixels, c.total)} of the image${c.fovPixels ? ` (${pct(c.insideFov, c.fovPixels)} of the field of view)` : ''}`;
}
