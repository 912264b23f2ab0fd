// Image grids and images (DEVELOPERS.md, "Geometry": pixel (i, j) centre x = (i - (nx-1)/2) dx + cx, i fastest).
import { InputError } from './errors';

/** A 2D reconstruction grid, mm. */
export interface ImageGrid {
  nx: number;
  ny: number;
  /** Pixel size along x and y, mm. */
  dx: number;
  dy: number;
  /** Centre of the grid, mm. */
  cx: number;
  cy: number;
}

export type ImageQuantity = 'mu' | 'hu';

/** A 2D image: values in 1/mm (mu) or HU, stored row by row (x fastest). */
export interface Image2D {
  grid: ImageGrid;
  data: Float32Array;
  quantity: ImageQuantity;
  /** Attenuation of water, 1/mm, when known (needed for HU). */
  muWater?: number;
  /** Radius of the scan's measured field of view about the isocentre, mm, when known. */
  fovRadius?: number;
  /** What made it, in words (the method and its knowledge, e.g. a recipe label), when known. */
  description?: string;
}

/** Centre of pixel (0, 0), mm. */
export function gridOrigin(g: ImageGrid): { x0: number; y0: number } {
  return { x0: g.cx - ((g.nx - 1) / 2) * g.dx, y0: g.cy - ((g.ny - 1) / 2) * g.dy };
}

/** A square grid of n x n pixels of size `pixel` mm centred on the isocentre. */
export function squareGrid(n: number, pixel: number): ImageGrid {
  return checkGrid({ nx: n, ny: n, dx: pixel, dy: pixel, cx: 0, cy: 0 });
}

/** Validates a grid (positive whole sizes up to 8192, positive finite pixel sizes). */
export function checkGrid(g: ImageGrid): ImageGrid {
  for (const k of ['nx', 'ny'] as const) {
    if (!Number.isInteger(g[k]) || g[k] < 1 || g[k] > 8192) throw new InputError(`grid ${k}: got ${g[k]}, expected a whole number from 1 to 8192`);
  }
  for (const k of ['dx', 'dy'] as const) {
    if (!(g[k] > 0) || !Number.isFinite(g[k])) throw new InputError(`grid ${k}: got ${g[k]}, expected a positive pixel size in mm`);
  }
  for (const k of ['cx', 'cy'] as const) {
    if (!Number.isFinite(g[k])) throw new InputError(`grid ${k}: got ${g[k]}, expected a finite centre in mm`);
  }
  return g;
}

/** Converts mu (1/mm) to HU: 1000 (mu - mu_water) / mu_water (ICRP 129). */
export function muToHu(mu: Float32Array, muWater: number): Float32Array {
  const out = new Float32Array(mu.length);
  const s = 1000 / muWater;
  for (let i = 0; i < mu.length; i++) out[i] = (mu[i] - muWater) * s;
  return out;
}

/** Converts HU to mu (1/mm). */
export function huToMu(hu: Float32Array, muWater: number): Float32Array {
  const out = new Float32Array(hu.length);
  const s = muWater / 1000;
  for (let i = 0; i < hu.length; i++) out[i] = muWater + hu[i] * s;
  return out;
}
