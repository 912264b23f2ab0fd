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

/** Projection data as described before any sample is read. */
export type ProjectionHeader = Omit<ProjectionData, 'data'>;

/** How the views of a scan become line integrals: decided once, applied to every chunk of views. */
export interface ScanPlan {
  geometry: Geometry;
  quantity: ProjectionQuantity;
  correction: IntensityCorrection;
  channels: number;
  rows: number;
  muWater?: number;
  notes?: Record<string, string>;
  format: string;
}

/** Attaches and checks the geometry and settles the quantity and corrections (no sample read). */
export function planScan(p: ProjectionHeader, o: ScanAssemblyOptions = {}): ScanPlan {
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
  if (quantity === 'line-integral') {
    if (corrections || c.saturation !== undefined) {
      throw new InputError(`scan (${p.format}): the values are line integrals already; flat, dark, i0 and saturation apply to intensity data`);
    }
    if (c.badPixels && c.badPixels.length !== p.channels * p.rows) throw new InputError(`bad-pixel mask: got ${c.badPixels.length} values, expected one frame of ${p.channels * p.rows}`);
    if (c.waterPolynomial) checkWaterPolynomial(c.waterPolynomial);
  }
  const mw = o.muWater ?? p.muWater;
  return {
    geometry, quantity, correction: { ...c, i0 }, channels: p.channels, rows: p.rows, format: p.format,
    muWater: mw === undefined ? undefined : checkMuWater(mw, o.muWater !== undefined ? 'mu_water' : 'scan mu_water'),
    notes: p.notes && Object.keys(p.notes).length ? p.notes : undefined,
  };
}

/** Counts over every chunk converted so far (intensity data), or rows left unfilled (line integrals). */
export interface ConversionTally {
  intensity?: IntensityReport;
  rowsWithoutGood: number;
}

/** Adds one chunk's intensity report to a running one (elements dead in the flat count once). */
function addReport(sum: IntensityReport | undefined, r: IntensityReport): IntensityReport {
  if (!sum) return { ...r };
  return {
    readings: sum.readings + r.readings, nonPositive: sum.nonPositive + r.nonPositive, saturated: sum.saturated + r.saturated,
    nonFinite: sum.nonFinite + r.nonFinite, deadInFlat: r.deadInFlat, filled: sum.filled + r.filled, rowsWithoutGood: sum.rowsWithoutGood + r.rowsWithoutGood,
  };
}

/** Turns whole views (as read, in place) into line integrals as `plan` says, adding to `tally`. */
export function convertViews(data: Float32Array, plan: ScanPlan, tally: ConversionTally, hooks?: RunHooks): void {
  const c = plan.correction;
  if (plan.quantity === 'intensity') {
    tally.intensity = addReport(tally.intensity, intensitiesToLineIntegrals(data, plan.channels, plan.rows, c, hooks));
    return;
  }
  const bad = countNonFinite(data);
  if (bad) throw new InputError(`scan (${plan.format}): ${bad} of ${data.length} line integrals are not finite numbers (NaN or infinite)`);
  if (c.badPixels) {
    const mask = c.badPixels;
    tally.rowsWithoutGood += fillBadElements(data, plan.channels, plan.rows, (_, i) => mask[i] === 1).rowsWithoutGood;
  }
  if (c.waterPolynomial) applyWaterPolynomial(data, c.waterPolynomial);
}

/** Sentences for the user about what conversion clamped or filled. */
export function tallyWarnings(tally: ConversionTally): string[] {
  if (tally.intensity) return describeIntensityReport(tally.intensity);
  return tally.rowsWithoutGood ? [`${tally.rowsWithoutGood} detector rows had no good element and were left as read`] : [];
}

/** Turns projection data into a validated scan. */
export function assembleScan(p: ProjectionData, o: ScanAssemblyOptions = {}): ScanReadResult {
  const plan = planScan(p, o);
  const tally: ConversionTally = { rowsWithoutGood: 0 };
  convertViews(p.data, plan, tally, o.hooks);
  const scan: Scan = { geometry: plan.geometry, data: p.data };
  if (plan.muWater !== undefined) scan.muWater = plan.muWater;
  if (plan.notes) scan.notes = plan.notes;
  return { scan, warnings: tallyWarnings(tally), intensity: tally.intensity, format: p.format };
}
