// The prior image (or volume) of prior-guided data-consistent reconstruction: checked, converted
// to mu and resampled onto the reconstruction grid; and how far a result departs from it.
import { InputError } from '../errors';
import { huToMu, type Image2D, type ImageGrid } from '../image';
import { resampleBilinear, sameGrid } from '../resample';
import { resampleTrilinear, sameVolumeGrid } from '../resample-volume';
import type { Volume, VolumeGrid } from '../volume';
import { discMask, type ReconGrid } from './space';

/** Values of a prior below zero, which no material has (noise or artefacts of the prior). */
export interface NegativeValues {
  /** Pixels or voxels below zero (beyond float rounding). */
  count: number;
  /** The lowest value, 1/mm. */
  lowest: number;
  what: 'pixels' | 'voxels';
}

/** A prior on the reconstruction grid (mu, 1/mm), with notes on what was done to it and its negative values. */
export interface PriorOnGrid {
  data: Float32Array;
  warnings: string[];
  negative?: NegativeValues;
}

/** The prior on the reconstruction grid (mu, 1/mm), with notes about what was done to it. */
export function priorOnGrid(prior: Image2D, grid: ImageGrid, support: Uint8Array): PriorOnGrid {
  const warnings: string[] = [];
  let mu = prior.data;
  if (prior.quantity === 'hu') {
    if (!(prior.muWater && prior.muWater > 0)) throw new InputError('prior: values are HU but its mu_water is unknown');
    mu = huToMu(prior.data, prior.muWater);
  }
  let bad = 0;
  for (const v of mu) if (!Number.isFinite(v)) bad++;
  if (bad > 0) throw new InputError(`prior: ${bad} of ${mu.length} pixels are not finite numbers, expected attenuation values`);
  const data = sameGrid(prior.grid, grid) ? Float32Array.from(mu) : resampleBilinear(mu, prior.grid, grid);
  if (!sameGrid(prior.grid, grid)) {
    const g = prior.grid;
    warnings.push(`prior resampled (bilinear) from ${g.nx} x ${g.ny} pixels of ${g.dx.toFixed(3)} mm onto the reconstruction grid`);
    const uncovered = uncoveredPixels(g, grid, support);
    if (uncovered > 0) warnings.push(`the prior does not cover ${uncovered} pixels of the reconstruction support; they count as 0 (air) there`);
  }
  return { data, warnings, negative: negativeValues(data, 'pixels') };
}

/** The prior volume (mu, 1/mm) on the reconstruction volume's grid (trilinear where they differ). */
export function priorVolumeOnGrid(prior: Volume, grid: VolumeGrid): PriorOnGrid {
  if (prior.quantity === 'hu') {
    if (!(prior.muWater && prior.muWater > 0)) throw new InputError('prior: values are HU but its mu_water is unknown');
    prior = { ...prior, data: huToMu(prior.data, prior.muWater), quantity: 'mu' };
  }
  let bad = 0;
  for (const v of prior.data) if (!Number.isFinite(v)) bad++;
  if (bad > 0) throw new InputError(`prior: ${bad} of ${prior.data.length} voxels are not finite numbers, expected attenuation values`);
  if (sameVolumeGrid(prior.grid, grid)) return { data: Float32Array.from(prior.data), warnings: [], negative: negativeValues(prior.data, 'voxels') };
  const g = prior.grid;
  const data = resampleTrilinear(prior.data, g, grid);
  return { data, warnings: [`prior resampled (trilinear) from ${g.nx} x ${g.ny} x ${g.nz} voxels onto the reconstruction volume`], negative: negativeValues(data, 'voxels') };
}

/** Negative values above this (1/mm, about -0.05 HU) are float rounding of zero (resampling, HU conversion), not worth a note. */
const ROUNDING_OF_ZERO = -1e-6;

/**
 * Negative values of a prior, if any. They are kept (clipping would bias the prior's
 * projections); the first non-negative update clips them in the image.
 */
function negativeValues(data: Float32Array, what: 'pixels' | 'voxels'): NegativeValues | undefined {
  let count = 0, lowest = 0;
  for (const v of data) {
    if (v < ROUNDING_OF_ZERO) count++;
    lowest = Math.min(lowest, v);
  }
  return count > 0 ? { count, lowest, what } : undefined;
}

/**
 * What negative values in a prior the user gave mean, for a warning. (A prior the method makes
 * itself, FBP of the truncated scan, always has a few from noise and streaks: that goes in the
 * report only.)
 */
export function negativePriorWarning(n: NegativeValues, clipped: boolean): string {
  return `prior: ${n.count} ${n.what} have negative attenuation (lowest ${n.lowest.toPrecision(3)} /mm), which no material has: noise or artefacts in the prior image. ` +
    `They are kept in its projections beyond the detector${clipped ? ' and set to 0 in the result' : ''}`;
}

/** Support pixels whose centre lies outside the prior's grid. */
function uncoveredPixels(from: ImageGrid, to: ImageGrid, support: Uint8Array): number {
  const hx = ((from.nx - 1) / 2) * from.dx, hy = ((from.ny - 1) / 2) * from.dy;
  const x0 = to.cx - ((to.nx - 1) / 2) * to.dx, y0 = to.cy - ((to.ny - 1) / 2) * to.dy;
  let n = 0;
  for (let j = 0; j < to.ny; j++) {
    for (let i = 0; i < to.nx; i++) {
      if (!support[j * to.nx + i]) continue;
      const x = x0 + i * to.dx - from.cx, y = y0 + j * to.dy - from.cy;
      if (Math.abs(x) > hx || Math.abs(y) > hy) n++;
    }
  }
  return n;
}

export interface Departure {
  pixels: number;
  /** RMS of result - prior, 1/mm. */
  rms: number;
  /** The same in HU, when mu_water is known. */
  rmsHu?: number;
  /** Mean of result - prior, 1/mm. */
  mean: number;
}

/**
 * RMS and mean difference of `result` from `prior` inside and outside the FOV circle (in every
 * slice of a volume), within the support.
 */
export function departureFromPrior(
  result: Float32Array, prior: Float32Array, grid: ReconGrid, support: Uint8Array, fovRadius: number, muWater?: number,
): { insideFov: Departure; outsideFov: Departure } {
  const inFov = discMask(grid, fovRadius);
  const region = (inside: boolean): Departure => {
    let s = 0, s2 = 0, n = 0;
    for (let i = 0; i < result.length; i++) {
      if (!support[i] || (inFov[i] === 1) !== inside) continue;
      const d = result[i] - prior[i];
      s += d;
      s2 += d * d;
      n++;
    }
    const rms = n ? Math.sqrt(s2 / n) : NaN;
    return { pixels: n, rms, mean: n ? s / n : NaN, ...(muWater ? { rmsHu: (1000 * rms) / muWater } : {}) };
  };
  return { insideFov: region(true), outsideFov: region(false) };
}
