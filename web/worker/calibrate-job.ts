// HU calibration of a stored scan in the page: mu_water set by hand, or measured from a region
// of one of the scan's results that the user marks as water or another material of known HU
// (core/preprocess/hu-calibration.ts). The value is stored with the scan and used by every HU
// figure: each result of the scan takes it, and their comparisons with the scan's reference
// (which are in HU) are computed again. Everything is written in one transaction that reads the
// records again (changes made meanwhile survive); a value that cannot be right is refused and
// nothing changes.
import { compareImages } from '../core/compare';
import { compareVolumes } from '../core/compare-volume';
import { InputError, throwIfCancelled } from '../core/errors';
import { checkMuWater, measureMuWater, type WaterMeasurement } from '../core/preprocess/hu-calibration';
import type { RunHooks } from '../core/run-hooks';
import type { Image2D } from '../core/image';
import type { Volume } from '../core/volume';
import { get } from 'idb-keyval';
import type { UseStore } from '../store/db';
import { checkRecord, keys, RecordError, type ResultMeta, type ScanCalibration, type ScanMeta } from '../store/records';
import { listResults, loadResultImage, loadResultVolume } from '../store/results';
import { loadReferenceVolume, loadScan } from '../store/scans';
import { patchRecord, transact } from '../store/transact';

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
  const { meta, image, undetermined } = await loadResultImage(req.resultId, store);
  if (meta.scanId !== req.scanId) throw new InputError(`water calibration: result "${meta.name}" belongs to another scan`);
  const measurement = measureMuWater({ ...image, quantity: 'mu' }, { shape: 'circle', ...r }, req.materialHu, undetermined);
  const muWater = checkMuWater(measurement.muWater, 'water calibration: the measured mu_water');
  return {
    muWater, measurement,
    calibration: { method: 'region', at, resultId: meta.id, resultName: meta.name, region: r, materialHu: req.materialHu, pixels: measurement.pixels, stdHu: measurement.stdHu },
  };
}

/** The fields of a result's description that follow the scan's mu_water. */
type ResultPatch = Pick<ResultMeta, 'muWater' | 'volume' | 'metrics' | 'volumeMetrics'>;

/** Recomputes the HU figures of each result of the scan with the new mu_water (read only). */
async function resultPatches(store: UseStore, scan: ScanMeta, reference: Image2D | undefined, muWater: number, hooks: RunHooks): Promise<Map<string, Partial<ResultPatch>>> {
  const results = await listResults(scan.id, store);
  let referenceVolume: Volume | undefined;
  const patches = new Map<string, Partial<ResultPatch>>();
  for (const [i, r] of results.entries()) {
    throwIfCancelled(hooks.signal);
    hooks.onProgress?.(i / Math.max(1, results.length), 'updating the results');
    // A volume's slabs carry mu only; its HU scale is in the description.
    const patch: Partial<ResultPatch> = { muWater, ...(r.volume ? { volume: { ...r.volume, muWater } } : {}) };
    try {
      if (r.metrics && reference) {
        const { image, undetermined } = await loadResultImage(r.id, store);
        patch.metrics = compareImages({ ...image, muWater }, reference, r.fovRadius, undetermined);
      }
      if (r.volume && r.volumeMetrics && scan.referenceVolume) {
        referenceVolume ??= await loadReferenceVolume(scan.id, store);
        const { volume } = await loadResultVolume(r.id, store);
        patch.volumeMetrics = compareVolumes({ ...volume, muWater }, referenceVolume, { fovRadius: volume.fovRadius, fovHalfHeight: volume.fovHalfHeight });
      }
    } catch (err) {
      if (err instanceof RecordError && !(await resultExists(store, r.id))) continue; // deleted meanwhile
      throw err;
    }
    patches.set(r.id, patch);
  }
  return patches;
}

async function resultExists(store: UseStore, id: string): Promise<boolean> {
  return (await get(keys.result(id), store)) !== undefined;
}

/**
 * Sets a stored scan's mu_water and brings its results' HU figures up to date. The figures are
 * computed first; then, in one transaction, the scan and each result are read again and only
 * the fields calibration owns are changed: a rename or a geometry edit made meanwhile survives,
 * a result deleted meanwhile stays deleted, and a scan deleted meanwhile fails the calibration.
 */
export async function calibrateScan(store: UseStore, req: CalibrationRequest, hooks: RunHooks = {}): Promise<CalibrationOutcome> {
  if (typeof req?.scanId !== 'string') throw new InputError('water calibration: a scan must be chosen');
  const { meta, reference } = await loadScan(req.scanId, store);
  hooks.onProgress?.(0, 'measuring');
  const { muWater, calibration, measurement } = await newValue(req, store);
  const patches = await resultPatches(store, meta, reference, muWater, hooks);
  throwIfCancelled(hooks.signal);
  const { scan, results } = await transact(store, async (tx) => {
    const scan = await patchRecord<ScanMeta>(tx, keys.scan(meta.id), 'scan', (old) => ({ ...old, muWater, calibration }));
    let results = 0;
    for (const [id, patch] of patches) {
      const old = await tx.get(keys.result(id));
      if (old === undefined) continue; // deleted meanwhile: it stays deleted
      tx.put(keys.result(id), { ...checkRecord<ResultMeta>(old, 'result', keys.result(id)), ...patch });
      results++;
    }
    return { scan, results };
  });
  hooks.onProgress?.(1, 'stored');
  return { scan, measurement, results };
}
