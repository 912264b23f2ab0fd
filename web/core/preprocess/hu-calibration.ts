// HU calibration: mu_water set by hand, or measured as the mean attenuation of a region the
// user marks as water (0 HU) or as a material of known HU (soft tissue, say +40 HU). From
// HU = 1000 (mu - mu_water) / mu_water (ICRP Publication 129; REFERENCES.md [hu-definition]):
// mu_water = mean(mu) / (1 + HU_ref / 1000).
import { InputError } from '../errors';
import { gridOrigin, type Image2D } from '../image';

/** A region of an image, mm in the image's coordinates. */
export type Region =
  | { shape: 'circle'; cx: number; cy: number; radius: number }
  | { shape: 'rectangle'; x0: number; y0: number; x1: number; y1: number };

export interface WaterMeasurement {
  /** mu_water, 1/mm. */
  muWater: number;
  /** Pixels whose centre lies in the region. */
  pixels: number;
  /** Standard deviation of mu in the region, 1/mm, and expressed in HU. */
  stdMu: number;
  stdHu: number;
}

/** Checks a hand-set mu_water (1/mm; about 0.02 at diagnostic energies). */
export function checkMuWater(mu: unknown, field = 'mu_water'): number {
  if (typeof mu !== 'number' || !(mu > 0.001 && mu < 1)) {
    throw new InputError(`${field}: got ${JSON.stringify(mu)}, expected the attenuation of water in 1/mm (about 0.02; between 0.001 and 1)`);
  }
  return mu;
}

/** Whether the centre of pixel (i, j) lies in the region. */
export function regionMask(image: Image2D, region: Region): Uint8Array {
  const g = image.grid;
  const { x0, y0 } = gridOrigin(g);
  const mask = new Uint8Array(g.nx * g.ny);
  for (let j = 0; j < g.ny; j++) {
    const y = y0 + j * g.dy;
    for (let i = 0; i < g.nx; i++) {
      const x = x0 + i * g.dx;
      const inside = region.shape === 'circle'
        ? (x - region.cx) ** 2 + (y - region.cy) ** 2 <= region.radius ** 2
        : x >= Math.min(region.x0, region.x1) && x <= Math.max(region.x0, region.x1) && y >= Math.min(region.y0, region.y1) && y <= Math.max(region.y0, region.y1);
      mask[j * g.nx + i] = inside ? 1 : 0;
    }
  }
  return mask;
}

/**
 * Measures mu_water from a region of a mu image that the user marks as a material of known HU
 * (0 for water). Non-finite pixels, and pixels the result does not determine (`undetermined`,
 * 1 = not determined: a DBP result's fill), make the measurement fail rather than be skipped.
 */
export function measureMuWater(image: Image2D, region: Region, referenceHu = 0, undetermined?: Uint8Array): WaterMeasurement {
  if (image.quantity !== 'mu') throw new InputError('water calibration: the image must hold mu (1/mm), not HU');
  if (!(referenceHu > -1000 && referenceHu < 3000)) throw new InputError(`reference HU: got ${referenceHu}, expected the HU of the marked material (0 for water)`);
  const mask = regionMask(image, region);
  const unset = undetermined ? mask.reduce((a, m, k) => a + (m & undetermined[k]), 0) : 0;
  if (unset) throw new InputError(`water calibration: ${unset} pixels of the marked region are not determined by this result (they hold a fill, not a measurement); mark a region inside the part it determines`, { field: 'region' });
  let n = 0, sum = 0, sum2 = 0;
  for (let k = 0; k < mask.length; k++) {
    if (!mask[k]) continue;
    const v = image.data[k];
    if (!Number.isFinite(v)) throw new InputError('water calibration: the marked region holds pixels that are not finite numbers');
    n++;
    sum += v;
    sum2 += v * v;
  }
  if (n < 9) throw new InputError(`water calibration: the marked region covers ${n} pixels, expected at least 9`);
  const mean = sum / n;
  const muWater = mean / (1 + referenceHu / 1000);
  if (!(muWater > 0)) throw new InputError(`water calibration: the marked region has mean mu ${mean.toPrecision(3)} /mm, expected a positive attenuation`);
  const stdMu = Math.sqrt(Math.max(0, sum2 / n - mean * mean));
  return { muWater, pixels: n, stdMu, stdHu: (1000 * stdMu) / muWater };
}
