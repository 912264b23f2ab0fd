// From projection data as read to a Scan: attach and check the geometry (the file's, or one
// given beside it), convert intensities to line integrals, record mu_water.
import { InputError } from '../errors';
import type { Geometry } from '../geometry/types';
import { checkGeometryMatchesData, validateGeometry } from '../geometry/validate';
import { fillBadElements } from '../preprocess/bad-pixels';
import { applyWaterPolynomial, checkWaterPolynomial } from '../preprocess/beam-hardening';
import { checkMuWater } from '../preprocess/hu-calibration';
import { describeIntensityReport, intensitiesToLineIntegrals, type IntensityCorrection, type IntensityReport } from '../preprocess/intensity';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import type { ProjectionData, ProjectionQuantity } from './projections';

export interface ScanAssemblyOptions {
  /** Geometry given beside the data; replaces the file's. */
  geometry?: Geometry;
  /** What the values are when the file does not say (default: intensity when a flat or i0 is given). */
  quantity?: ProjectionQuantity;
  /** Dark/flat/i0 and the other corrections for intensity data. */
  correction?: IntensityCorrection;
  /** mu_water (1/mm) set by hand; replaces the file's. */
  muWater?: number;
  hooks?: RunHooks;
}

export interface ScanReadResult {
  scan: Scan;
  /** Sentences for the user about what was clamped or filled. */
  warnings: string[];
  /** Counts from intensity preprocessing, when it ran. */
  intensity?: IntensityReport;
  format: string;
}

function countNonFinite(data: Float32Array): number {
  let n = 0;
  for (let i = 0; i < data.length; i++) if (!Number.isFinite(data[i])) n++;
  return n;
}

/** Turns projection data into a validated scan. */
export function assembleScan(p: ProjectionData, o: ScanAssemblyOptions = {}): ScanReadResult {
  let geometry = o.geometry;
  if (!geometry) {
    if (p.geometry === undefined) {
      throw new InputError(`scan (${p.format}): the file carries no geometry`, {
        remedy: { cli: 'give one with --geometry geom.json', page: 'add its geometry (a .json file) to the same import' },
      });
    }
    geometry = validateGeometry(p.geometry);
  }
  checkGeometryMatchesData(geometry, p.channels, p.rows, p.views);
  const c = o.correction ?? {};
  const corrections = c.flat !== undefined || c.i0 !== undefined || c.dark !== undefined;
  const i0 = c.i0 ?? (c.flat === undefined ? p.i0 : undefined);
  const quantity = o.quantity ?? p.quantity ?? (corrections ? 'intensity' : 'line-integral');
  const warnings: string[] = [];
  let intensity: IntensityReport | undefined;
  if (quantity === 'intensity') {
    intensity = intensitiesToLineIntegrals(p.data, p.channels, p.rows, { ...c, i0 }, o.hooks);
    warnings.push(...describeIntensityReport(intensity));
  } else {
    if (corrections || c.saturation !== undefined) {
      throw new InputError(`scan (${p.format}): the values are line integrals already; flat, dark, i0 and saturation apply to intensity data`);
    }
    const bad = countNonFinite(p.data);
    if (bad) throw new InputError(`scan (${p.format}): ${bad} of ${p.data.length} line integrals are not finite numbers (NaN or infinite)`);
    if (c.badPixels) {
      const mask = c.badPixels;
      if (mask.length !== p.channels * p.rows) throw new InputError(`bad-pixel mask: got ${mask.length} values, expected one frame of ${p.channels * p.rows}`);
      const f = fillBadElements(p.data, p.channels, p.rows, (_, i) => mask[i] === 1);
      if (f.rowsWithoutGood) warnings.push(`${f.rowsWithoutGood} detector rows had no good element and were left as read`);
    }
    if (c.waterPolynomial) applyWaterPolynomial(p.data, checkWaterPolynomial(c.waterPolynomial));
  }
  const scan: Scan = { geometry, data: p.data };
  const mw = o.muWater ?? p.muWater;
  if (mw !== undefined) scan.muWater = checkMuWater(mw, o.muWater !== undefined ? 'mu_water' : 'scan mu_water');
  if (p.notes && Object.keys(p.notes).length) scan.notes = p.notes;
  return { scan, warnings, intensity, format: p.format };
}
