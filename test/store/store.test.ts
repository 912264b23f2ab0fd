// The storage layer over IndexedDB (fake-indexeddb in Node): versioned records, one transaction
// per import, deletion of a scan with its results, and the quota-full report.
import 'fake-indexeddb/auto';
import { createStore, set, get } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import type { Geometry } from '../../web/core/geometry/types';
import { squareGrid } from '../../web/core/image';
import { putAll, keysWithPrefix } from '../../web/store/db';
import { formatBytes, StorageFullError, toStorageError } from '../../web/store/quota';
import { RecordError, SCHEMA_VERSION } from '../../web/store/records';
import { deleteResult, listResults, loadResultImage, saveResult } from '../../web/store/results';
import { deleteScan, getScanMeta, listScans, loadScan, renameScan, saveScan, setScanGeometry } from '../../web/store/scans';
import { loadSettings, saveSettings } from '../../web/store/settings';

let n = 0;
const freshStore = () => createStore(`test-${n++}`, 'records');

const geometry: Geometry = {
  kind: 'fan', detector: { shape: 'flat', channels: 4, rows: 1, pitch: [1, 1], offset: [0, 0] },
  sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 120, count: 3 },
};

function scanInput(name = 'scan A') {
  return { name, scan: { geometry, data: Float32Array.from({ length: 12 }, (_, i) => i / 10), muWater: 0.02 }, source: { type: 'file' as const, fileNames: ['a.nrrd'] } };
}

function resultInput(scanId: string) {
  return { scanId, name: 'FBP', recipe: { method: 'fbp' }, warnings: [], report: {}, metrics: null, seconds: 1 };
}

const image = () => ({ grid: squareGrid(2, 1), data: Float32Array.from([1, 2, 3, 4]), quantity: 'mu' as const, muWater: 0.02, fovRadius: 3 });

describe('scans', () => {
  it('round-trip projections as Float32Array with a versioned description', async () => {
    const store = freshStore();
    const meta = await saveScan({ ...scanInput(), reference: { grid: squareGrid(2, 1), data: new Float32Array(4) } }, store);
    expect(meta).toMatchObject({ schema: SCHEMA_VERSION, kind: 'scan', name: 'scan A', bytes: 12 * 4 + 4 * 4, hasReference: true });
    const loaded = await loadScan(meta.id, store);
    expect(loaded.scan.data).toBeInstanceOf(Float32Array);
    expect(Array.from(loaded.scan.data)).toEqual(Array.from(scanInput().scan.data));
    expect(loaded.reference?.grid.nx).toBe(2);
    expect((await listScans(store)).map((s) => s.id)).toEqual([meta.id]);
  });

  it('rename checks the name and changes nothing else', async () => {
    const store = freshStore();
    const meta = await saveScan(scanInput(), store);
    await renameScan(meta.id, '  thorax  ', store);
    expect(await getScanMeta(meta.id, store)).toEqual({ ...meta, name: 'thorax' });
    await expect(renameScan(meta.id, '   ', store)).rejects.toThrow(InputError);
    expect((await getScanMeta(meta.id, store)).name).toBe('thorax');
  });

  it('a geometry edit is validated against the data, and a refused one changes nothing', async () => {
    const store = freshStore();
    const meta = await saveScan(scanInput(), store);
    const bad = { ...geometry, sourceDetector: 400 };
    await expect(setScanGeometry(meta.id, bad, store)).rejects.toThrow(/sourceDetector: got 400, expected a distance greater than the source to isocentre distance/);
    const wrongSize = { ...geometry, detector: { ...geometry.detector, channels: 5 } };
    await expect(setScanGeometry(meta.id, wrongSize, store)).rejects.toThrow(/the data has 4 channels/);
    expect((await getScanMeta(meta.id, store)).geometry).toEqual(geometry);
    const good = { ...geometry, sourceDetector: 1000 };
    await setScanGeometry(meta.id, good, store);
    expect((await getScanMeta(meta.id, store)).geometry.sourceDetector).toBe(1000);
  });

  it('deleting a scan deletes its results and nothing else', async () => {
    const store = freshStore();
    const a = await saveScan(scanInput('a'), store);
    const b = await saveScan(scanInput('b'), store);
    await saveResult(resultInput(a.id), image(), store);
    const rb = await saveResult(resultInput(b.id), image(), store);
    await deleteScan(a.id, store);
    expect((await listScans(store)).map((s) => s.id)).toEqual([b.id]);
    expect((await listResults(undefined, store)).map((r) => r.id)).toEqual([rb.id]);
    expect(await keysWithPrefix('result-data/', store)).toEqual([`result-data/${rb.id}`]);
  });
});

describe('results', () => {
  it('round-trip an image with its grid, mu_water and FOV', async () => {
    const store = freshStore();
    const s = await saveScan(scanInput(), store);
    const r = await saveResult(resultInput(s.id), image(), store);
    const back = await loadResultImage(r.id, store);
    expect(back.image).toEqual(image());
    expect(await listResults('other', store)).toEqual([]);
    await deleteResult(r.id, store);
    expect(await listResults(s.id, store)).toEqual([]);
  });
});

describe('transactions', () => {
  it('a write that fails part-way stores nothing', async () => {
    const store = freshStore();
    // A function cannot be stored (structured clone): the second put throws DataCloneError.
    await expect(putAll([['scan/x', { a: 1 }], ['scan-data/x', { f: () => 1 }]], store)).rejects.toThrow();
    expect(await get('scan/x', store)).toBeUndefined();
  });
});

describe('records', () => {
  it('a record of another schema is refused with the reason', async () => {
    const store = freshStore();
    await set('scan/z', { schema: SCHEMA_VERSION + 1, kind: 'scan', id: 'z' }, store);
    await expect(listScans(store)).rejects.toThrow(RecordError);
    await expect(listScans(store)).rejects.toThrow(/written by a newer version/);
  });

  it('settings start from defaults and keep changes', async () => {
    const store = freshStore();
    expect((await loadSettings(store)).demoCreated).toBe(false);
    await saveSettings({ demoCreated: true }, store);
    expect((await loadSettings(store)).demoCreated).toBe(true);
  });
});

describe('quota', () => {
  it('a quota error becomes a message naming the largest stored items', async () => {
    const store = freshStore();
    const big = await saveScan({ ...scanInput('big scan'), scan: { geometry: { ...geometry, anglesDeg: { start: 0, step: 0.12, count: 3000 } }, data: new Float32Array(3000 * 4) } }, store);
    await saveScan(scanInput('small scan'), store);
    const quota = new DOMException('quota', 'QuotaExceededError');
    const err = await toStorageError(quota, store);
    expect(err).toBeInstanceOf(StorageFullError);
    const e = err as StorageFullError;
    expect(e.largest[0]).toMatchObject({ kind: 'scan', id: big.id, bytes: 48000 });
    expect(e.message).toMatch(/nothing was saved/);
    expect(e.message).toMatch(/scan "big scan" \(48 kB\)/);
    const other = new Error('other');
    expect(await toStorageError(other, store)).toBe(other);
  });

  it('sizes read as browsers report quota (powers of 1000)', () => {
    expect(formatBytes(999)).toBe('999 B');
    expect(formatBytes(1500)).toBe('1.5 kB');
    expect(formatBytes(48_000)).toBe('48 kB');
    expect(formatBytes(2.5e9)).toBe('2.5 GB');
  });
});
