// Resampling an image onto another grid (bilinear; zero outside the source grid).
import { gridOrigin, type ImageGrid } from './image';

/** Samples `src` (on grid `from`) at the pixel centres of grid `to`, bilinearly. */
export function resampleBilinear(src: Float32Array, from: ImageGrid, to: ImageGrid): Float32Array {
  const out = new Float32Array(to.nx * to.ny);
  const a = gridOrigin(from), b = gridOrigin(to);
  const at = (ii: number, jj: number) => (ii < 0 || jj < 0 || ii >= from.nx || jj >= from.ny ? 0 : src[jj * from.nx + ii]);
  for (let j = 0; j < to.ny; j++) {
    const fy = (b.y0 + j * to.dy - a.y0) / from.dy;
    const j0 = Math.floor(fy), ty = fy - j0;
    for (let i = 0; i < to.nx; i++) {
      const fx = (b.x0 + i * to.dx - a.x0) / from.dx;
      const i0 = Math.floor(fx), tx = fx - i0;
      out[j * to.nx + i] =
        (1 - ty) * ((1 - tx) * at(i0, j0) + tx * at(i0 + 1, j0)) + ty * ((1 - tx) * at(i0, j0 + 1) + tx * at(i0 + 1, j0 + 1));
    }
  }
  return out;
}

/** True when two grids have the same size, spacing and centre. */
export function sameGrid(a: ImageGrid, b: ImageGrid): boolean {
  const eq = (x: number, y: number) => Math.abs(x - y) <= 1e-6 * Math.max(1, Math.abs(x), Math.abs(y));
  return a.nx === b.nx && a.ny === b.ny && eq(a.dx, b.dx) && eq(a.dy, b.dy) && eq(a.cx, b.cx) && eq(a.cy, b.cy);
}
