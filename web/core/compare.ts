// Comparing a reconstruction with a reference image: RMSE, PSNR and SSIM over the image, the
// object, and inside / outside the measured field of view. The same function serves the CLI
// and the page.
import { InputError } from './errors';
import type { Image2D } from './image';
import { cupping, type CuppingFigures } from './cupping';
import { circleMask, psnr, rmse, ssim } from './metrics';
import { checkOverlap } from './overlap';
import { resampleBilinear, sameGrid } from './resample';

export interface RegionFigures {
  pixels: number;
  rmse: number;
  psnr: number;
  ssim: number;
}

export interface Comparison {
  /** 'HU' when mu_water is known, else '1/mm'. */
  unit: 'HU' | '1/mm';
  regions: Record<'image' | 'object' | 'insideFov' | 'outsideFov', RegionFigures | null>;
  /** True when the reference was resampled onto the image grid. */
  resampled: boolean;
  /** Fraction of the image's area the reference covers (overlap.ts). */
  overlap: number;
  fovRadiusMm: number | null;
  /** Centre-to-rim shape inside the FOV (object pixels, mu), when the FOV radius is known. */
  cupping: CuppingFigures | null;
  notes: string[];
}

/** Reference values above this fraction of mu_water (or of the reference maximum) count as object. */
const OBJECT_THRESHOLD = 0.05;

/**
 * The pixels that count (1) when `exclude` marks those the image does not determine (DBP: a fill,
 * not a value); undefined when every pixel counts. Says in `notes` how many were left out.
 */
function keptPixels(g: Image2D['grid'], exclude: Uint8Array | undefined, notes: string[]): Uint8Array | undefined {
  if (!exclude) return undefined;
  if (exclude.length !== g.nx * g.ny) throw new InputError(`compare: the mask of undetermined pixels has ${exclude.length} pixels, expected ${g.nx * g.ny} (the image's grid)`);
  const keep = exclude.map((v) => (v ? 0 : 1));
  const left = exclude.length - keep.reduce((a, v) => a + v, 0);
  if (left) notes.push(`${left} pixels the image does not determine are left out of every figure`);
  return keep;
}

/**
 * Compares `image` with `reference` (both mu). The reference is resampled onto the image grid
 * when the grids differ. `fovRadius` (mm), when given, splits the object into inside / outside
 * the field of view. Pixels marked in `exclude` (1 = not determined by the image) enter no figure.
 */
export function compareImages(image: Image2D, reference: Image2D, fovRadius?: number, exclude?: Uint8Array): Comparison {
  const notes: string[] = [];
  const g = image.grid;
  const keep = keptPixels(g, exclude, notes);
  const { overlap, note } = checkOverlap(g, reference.grid);
  if (note) notes.push(note);
  const resampled = !sameGrid(g, reference.grid);
  const ref = resampled ? resampleBilinear(reference.data, reference.grid, g) : reference.data;
  if (resampled) notes.push('reference resampled (bilinear) onto the image grid');
  const muWater = image.muWater ?? reference.muWater;
  const scale = muWater ? 1000 / muWater : 1;
  const toUnit = (d: Float32Array) => (muWater ? d.map((v) => (v - muWater) * scale) : d);
  const a = toUnit(image.data), b = toUnit(ref);
  let bad = 0;
  for (const v of image.data) if (!Number.isFinite(v)) bad++;
  if (bad) throw new InputError(`image: ${bad} pixels are not finite numbers (NaN or infinity); the comparison would be meaningless`);
  let lo = Infinity, hi = -Infinity, refMax = 0;
  for (let i = 0; i < b.length; i++) {
    lo = Math.min(lo, b[i]);
    hi = Math.max(hi, b[i]);
    refMax = Math.max(refMax, ref[i]);
  }
  const range = hi - lo || 1;
  const threshold = OBJECT_THRESHOLD * (muWater ?? refMax);
  const object = ref.map((v, i) => (v > threshold && (!keep || keep[i]) ? 1 : 0)) as unknown as Uint8Array;
  const figures = (mask?: Uint8Array): RegionFigures | null => {
    const pixels = mask ? mask.reduce((s, v) => s + v, 0) : a.length;
    if (pixels === 0) return null;
    return { pixels, rmse: rmse(a, b, mask), psnr: psnr(a, b, range, mask), ssim: ssim(a, b, g.nx, g.ny, range, mask) };
  };
  const fov = fovRadius;
  let inside: Uint8Array | null = null, outside: Uint8Array | null = null;
  if (fov !== undefined) {
    const c = circleMask(g, fov);
    inside = new Uint8Array(c.length);
    outside = new Uint8Array(c.length);
    for (let i = 0; i < c.length; i++) {
      inside[i] = c[i] & object[i];
      outside[i] = (1 - c[i]) & object[i];
    }
  }
  return {
    unit: muWater ? 'HU' : '1/mm',
    regions: {
      image: figures(keep),
      object: figures(Uint8Array.from(object)),
      insideFov: inside ? figures(inside) : null,
      outsideFov: outside ? figures(outside) : null,
    },
    resampled,
    overlap,
    fovRadiusMm: fov ?? null,
    cupping: fov !== undefined ? cupping(image, fov, ref, object) : null,
    notes,
  };
}
