// HU calibration of a stored scan in the page: mu_water set by hand, or measured from a region
// of one of the scan's results that the user marks as water or another material of known HU
// (core/preprocess/hu-calibration.ts). The value is stored with the scan and used by every HU
// figure: each result of the scan takes it, and their comparisons with the scan's reference
// (which are in HU) are computed again. Everything is written in one transaction; a value that
// cannot be right is refused and nothing changes.
import { compareImages } from '../core/compare';
import { compareVolumes } from '../core/compare-volume';
import { InputError, throwIfCancelled } from '../core/errors';
import { checkMuWater, measureMuWater, type WaterMeasurement } from '../core/preprocess/hu-calibration';
import type { RunHooks } from '../core/run-hooks';
import type { Volume } from '../core/volume';
import { putAll, type UseStore } from '../store/db';
import { keys, type ResultMeta, type ScanCalibration, type ScanMeta } from '../store/records';
import { listResults, loadResultImage, loadResultVolume } from '../store/results';
import { loadReferenceVolume, loadScan } from '../store/scans';

/** By hand (mu_water in 1/mm), or from a circle (mm) on a result of the scan marked as a material of known HU. */
export type CalibrationRequest =
  | { scanId: string; muWater: number }
  | { scanId: string; resultId: string; region: { cx: number; cy: number; radius: number }; materialHu: number };

export interface CalibrationOutcome {
  scan: ScanMeta;
  /** The region's figures, when measured. */
  measurement?: WaterMeasurement;
  /** Results of the scan that took the new value. */
  results: number;
}

async function newValue(req: CalibrationRequest, store: UseStore): Promise<{ muWater: number; calibration: ScanCalibration; measurement?: WaterMeasurement }> {
  const at = Date.now();
  if (!('resultId' in req)) return { muWater: checkMuWater(req.muWater), calibration: { method: 'hand', at } };
  const r = req.region;
  if (!r || ![r.cx, r.cy, r.radius].every(Number.isFinite) || !(r.radius > 0)) throw new InputError('water calibration: mark a region (a circle) on an image first');
  if (!Number.isFinite(req.materialHu)) throw new InputError(`water calibration: material HU ${String(req.materialHu)}, expected a number (0 for water)`);
  const { meta, image } = await loadResultImage(req.resultId, store);
  if (meta.scanId !== req.scanId) throw new InputError(`water calibration: result "${meta.name}" belongs to another scan`);
  const measurement = measureMuWater({ ...image, quantity: 'mu' }, { shape: 'circle', ...r }, req.materialHu);
  const muWater = checkMuWater(measurement.muWater, 'water calibration: the measured mu_water');
  return {
    muWater, measurement,
    calibration: { method: 'region', at, resultId: meta.id, resultName: meta.name, region: r, materialHu: req.materialHu, pixels: measurement.pixels, stdHu: measurement.stdHu },
  };
}

/** Sets a stored scan's mu_water and brings its results' HU figures up to date. */
export async function calibrateScan(store: UseStore, req: CalibrationRequest, hooks: RunHooks = {}): Promise<CalibrationOutcome> {
  if (typeof req?.scanId !== 'string') throw new InputError('water calibration: a scan must be chosen');
  const { meta, reference } = await loadScan(req.scanId, store);
  hooks.onProgress?.(0, 'measuring');
  const { muWater, calibration, measurement } = await newValue(req, store);
  const results = await listResults(req.scanId, store);
  let referenceVolume: Volume | undefined;
  const entries: Array<[string, unknown]> = [];
  for (const [i, r] of results.entries()) {
    throwIfCancelled(hooks.signal);
    hooks.onProgress?.(i / Math.max(1, results.length), 'updating the results');
    // A volume's slabs carry mu only; its HU scale is in the description.
    const next: ResultMeta = { ...r, muWater, ...(r.volume ? { volume: { ...r.volume, muWater } } : {}) };
    if (r.metrics && reference) {
      const { image } = await loadResultImage(r.id, store);
      next.metrics = compareImages({ ...image, muWater }, reference, r.fovRadius);
    }
    if (r.volume && r.volumeMetrics && meta.referenceVolume) {
      referenceVolume ??= await loadReferenceVolume(req.scanId, store);
      const { volume } = await loadResultVolume(r.id, store);
      next.volumeMetrics = compareVolumes({ ...volume, muWater }, referenceVolume, { fovRadius: volume.fovRadius, fovHalfHeight: volume.fovHalfHeight });
    }
    entries.push([keys.result(r.id), next]);
  }
  throwIfCancelled(hooks.signal);
  const scan: ScanMeta = { ...meta, muWater, calibration };
  await putAll([[keys.scan(meta.id), scan], ...entries], store);
  hooks.onProgress?.(1, 'stored');
  return { scan, measurement, results: results.length };
}
