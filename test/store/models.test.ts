// Networks and consistency reports in storage (fake-indexeddb): versioned records, a record of
// another schema refused with a reason, networks named when the quota is full, and a result's
// consistency report read back as it was stored.
import 'fake-indexeddb/auto';
import { createStore, set } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import { squareGrid } from '../../web/core/image';
import { validateModelInfo } from '../../web/core/model/description';
import { loadConsistency, storedConsistency } from '../../web/store/consistency';
import { putAll } from '../../web/store/db';
import { listModels, loadModel, saveModel } from '../../web/store/models';
import { StorageFullError, toStorageError } from '../../web/store/quota';
import { keys, SCHEMA_VERSION } from '../../web/store/records';
import { resultRecords, saveResult } from '../../web/store/results';
import type { ConsistencyReport } from '../../web/core/consistency/consistency-report';

let n = 0;
const freshStore = () => createStore(`models-store-${n++}`, 'records');

const info = validateModelInfo({ format: 'rimfill-model/1', input: { name: 'image', quantity: 'mu', from: { method: 'fbp' } }, output: { name: 'prior', quantity: 'mu' } });
const model = (name: string, bytes: number) => ({
  name, info, signature: { inputs: [], outputs: [] }, fileNames: { model: `${name}.onnx`, description: `${name}.json` }, warnings: [],
  onnx: new Uint8Array(bytes).fill(7), description: '{}',
});

describe('stored networks', () => {
  it('round-trip, and a record written by a newer version is refused with the reason', async () => {
    const store = freshStore();
    const meta = await saveModel(model('unet', 100), store);
    expect(meta).toMatchObject({ schema: SCHEMA_VERSION, kind: 'model', bytes: 100 });
    expect((await loadModel(meta.id, store)).onnx).toEqual(new Uint8Array(100).fill(7));
    await set(keys.model(meta.id), { ...meta, schema: SCHEMA_VERSION + 1 }, store);
    await expect(listModels(store)).rejects.toThrow(/stored record model\/.*: schema 3, this page reads 1 to 2 \(written by a newer version of Rimfill/);
  });

  it('a full quota names the largest networks among what could be deleted', async () => {
    const store = freshStore();
    const big = await saveModel(model('large network', 90_000), store);
    await saveModel(model('small network', 10), store);
    const e = (await toStorageError(new DOMException('quota', 'QuotaExceededError'), store)) as StorageFullError;
    expect(e).toBeInstanceOf(StorageFullError);
    expect(e.largest[0]).toMatchObject({ kind: 'model', id: big.id, bytes: 90_000 });
    expect(e.message).toMatch(/model "large network" \(90 kB\)/);
  });
});

describe('stored consistency reports', () => {
  const grid = squareGrid(4, 1);
  const report: ConsistencyReport = {
    views: 2, channels: 3, residual: Float32Array.from([0.1, -0.2, 0.3, 0, 0, 0.5]), warnings: ['w'],
    summary: { relativeRms: 0.1, rmsResidual: 0.2, meanResidual: 0.1, rmsMeasured: 2, rays: 6, excludedRays: 0, averagedChannels: 1, robustSigma: 0.05, noiseBins: [{ upTo: 3, sigma: 0.05, rays: 6 }], threshold: 0.25, thresholdMax: 0.25, flaggedRays: 2, flaggedFraction: 1 / 3, flaggedViews: 2 },
    profiles: { flagged: Uint8Array.from([0, 0, 1, 0, 0, 1]), viewRms: Float32Array.from([0.2, 0.3]), viewRelative: Float32Array.from([0.1, 0.1]), viewMaxAbs: Float32Array.from([0.3, 0.5]), viewFlagged: Int32Array.from([1, 1]), channelRms: Float32Array.from([0.1, 0.2, 0.4]) },
  };
  const image = { grid, data: new Float32Array(16), quantity: 'mu' as const };
  const base = { scanId: 's', name: 'net', recipe: { method: 'network' }, warnings: [], report: {}, metrics: null, seconds: 1 };

  it('is read back as stored, with its map, and counted in the result size', async () => {
    const store = freshStore();
    const map = new Float32Array(16).fill(0.5);
    const stored = storedConsistency(report, grid, map);
    const { meta, entries } = resultRecords({ ...base, consistency: stored.meta }, image, { consistency: stored.arrays });
    await putAll(entries, store);
    expect(meta.bytes).toBe(64 + 24 + 6 + 64);
    const back = await loadConsistency(meta.id, store);
    expect(back!.report).toEqual(report);
    expect(back!.checkedGrid).toEqual(grid);
    expect(back!.map).toEqual(map);
  });

  it('a result without a report has none; a report whose arrays are missing is refused', async () => {
    const store = freshStore();
    // A result is stored only while its scan is (its description is all the check reads).
    await putAll([[keys.scan('s'), { schema: SCHEMA_VERSION, kind: 'scan', id: 's' }]], store);
    const plain = await saveResult(base, image, store);
    expect(await loadConsistency(plain.id, store)).toBeUndefined();
    const broken = await saveResult({ ...base, consistency: storedConsistency(report, grid).meta }, image, store);
    await expect(loadConsistency(broken.id, store)).rejects.toThrow(/consistency report's residual sinogram is missing/);
  });
});
