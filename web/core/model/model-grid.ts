// The grid of the network's input image, and of its output, given the reconstruction grid.
import { checkGrid, type ImageGrid } from '../image';
import type { ModelInputInfo } from './description';

/**
 * The network input grid: the reconstruction grid when the description gives no size; `size`
 * pixels of `pixel` mm when it gives both; otherwise `size` pixels over the reconstruction's
 * field (its larger side). Centred where the reconstruction grid is.
 */
export function modelInputGrid(input: ModelInputInfo, recon: ImageGrid): ImageGrid {
  if (input.size === undefined) return recon;
  const pixel = input.pixel ?? Math.max(recon.nx * recon.dx, recon.ny * recon.dy) / input.size;
  return checkGrid({ nx: input.size, ny: input.size, dx: pixel, dy: pixel, cx: recon.cx, cy: recon.cy });
}

/** The grid of a network output of `ny` x `nx` pixels: the same field as the input grid. */
export function modelOutputGrid(inputGrid: ImageGrid, nx: number, ny: number): ImageGrid {
  return checkGrid({
    nx, ny,
    dx: (inputGrid.nx * inputGrid.dx) / nx,
    dy: (inputGrid.ny * inputGrid.dy) / ny,
    cx: inputGrid.cx, cy: inputGrid.cy,
  });
}
