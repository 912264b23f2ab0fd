// Turning images into display values and pixels: HU when mu_water is known (ICRP 129:
// HU = 1000 (mu - mu_water) / mu_water), else mu in 1/mm; grey RGBA with the anterior (+y)
// side at the top (rows drawn from the last to the first, image.ts stores y increasing).
import { muToHu, type Image2D } from '../../core/image';
import { resampleBilinear, sameGrid } from '../../core/resample';
import type { Point } from './measure';
import { greyOf, type DisplayWindow } from './window-level';

export type DisplayUnit = 'HU' | '1/mm';

/** An image ready to show: values in display units on its grid. */
export interface DisplayImage {
  /** Title shown on the panel. */
  label: string;
  grid: Image2D['grid'];
  values: Float32Array;
  unit: DisplayUnit;
  /** Measured field-of-view radius, mm, when known. */
  fovRadius?: number;
  /** The field of view as a closed polygon (mm), drawn when given (planes of a volume). */
  outline?: Point[];
  /** Names of the horizontal and vertical axes for read-outs (default x, y). */
  axes?: [string, string];
  /** 1 where the result does not determine the pixel (DBP): drawn as an overlay, never read as a value. */
  undetermined?: Uint8Array;
}

/** Display values of an image (mu, 1/mm), with the mask of the pixels it does not determine when it has one. */
export function toDisplay(image: Image2D, label: string, undetermined?: Uint8Array): DisplayImage {
  const mask = undetermined ? { undetermined } : {};
  if (image.quantity === 'hu') return { label, grid: image.grid, values: image.data, unit: 'HU', fovRadius: image.fovRadius, ...mask };
  if (image.muWater && image.muWater > 0) return { label, grid: image.grid, values: muToHu(image.data, image.muWater), unit: 'HU', fovRadius: image.fovRadius, ...mask };
  return { label, grid: image.grid, values: image.data, unit: '1/mm', fovRadius: image.fovRadius, ...mask };
}

/** a's mask joined with b's where b's grid is a's (a difference is not determined where either image is not). */
function differenceMask(a: DisplayImage, b: DisplayImage): Uint8Array | undefined {
  const bm = b.undetermined && sameGrid(a.grid, b.grid) ? b.undetermined : undefined;
  if (!bm) return a.undetermined;
  const out = Uint8Array.from(bm);
  if (a.undetermined) for (let i = 0; i < out.length; i++) out[i] |= a.undetermined[i];
  return out;
}

/** a - b on a's grid (b resampled bilinearly when the grids differ), not determined where a (or b on the same grid) is not. */
export function difference(a: DisplayImage, b: DisplayImage, label: string): DisplayImage {
  const bv = sameGrid(a.grid, b.grid) ? b.values : resampleBilinear(b.values, b.grid, a.grid);
  const out = new Float32Array(a.values.length);
  for (let i = 0; i < out.length; i++) out[i] = a.values[i] - bv[i];
  const mask = differenceMask(a, b);
  return { label, grid: a.grid, values: out, unit: a.unit, fovRadius: a.fovRadius, ...(mask ? { undetermined: mask } : {}) };
}

/** RGBA pixels (nx by ny, anterior at the top) of values under a window. */
export function greyPixels(values: Float32Array, nx: number, ny: number, w: DisplayWindow): Uint8ClampedArray {
  const out = new Uint8ClampedArray(nx * ny * 4);
  for (let j = 0; j < ny; j++) {
    const src = (ny - 1 - j) * nx;
    const dst = j * nx * 4;
    for (let i = 0; i < nx; i++) {
      const g = greyOf(values[src + i], w);
      const o = dst + i * 4;
      out[o] = out[o + 1] = out[o + 2] = g;
      out[o + 3] = 255;
    }
  }
  return out;
}
