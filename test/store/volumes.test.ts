// Volumes in storage (fake-indexeddb in Node): slabs of whole slices written with their owner in
// one transaction, read back exactly, checked for damage, and deleted with their owner.
import 'fake-indexeddb/auto';
import { createStore, get, set } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import type { Geometry } from '../../web/core/geometry/types';
import type { Volume } from '../../web/core/volume';
import { keysWithPrefix, putAll } from '../../web/store/db';
import { RecordError } from '../../web/store/records';
import { deleteResult, listResults, loadResultVolume, saveResult } from '../../web/store/results';
import { deleteScan, loadReferenceVolume, saveScan } from '../../web/store/scans';
import { loadVolume, slabKey, volumeEntries } from '../../web/store/volumes';

let n = 0;
const freshStore = () => createStore(`volumes-${n++}`, 'records');

const geometry: Geometry = {
  kind: 'cone', detector: { shape: 'flat', channels: 4, rows: 3, pitch: [1, 1], offset: [0, 0] },
  sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 120, count: 3 },
};

const volume = (nz = 7): Volume => ({
  grid: { nx: 5, ny: 4, nz, dx: 1, dy: 1, dz: 2, cx: 0, cy: 0, cz: 1 },
  data: Float32Array.from({ length: 20 * nz }, (_, i) => i / 7),
  quantity: 'mu', muWater: 0.02, fovRadius: 3, fovHalfHeight: 4,
});

const scanInput = () => ({ name: 'cone', scan: { geometry, data: new Float32Array(36), muWater: 0.02 }, source: { type: 'file' as const, fileNames: ['c.nrrd'] } });
const resultInput = (scanId: string) => ({ scanId, name: 'FDK', recipe: { method: 'fbp' }, warnings: [], report: {}, metrics: null, seconds: 1 });
const slice = (v: Volume) => ({ grid: { nx: 5, ny: 4, dx: 1, dy: 1, cx: 0, cy: 0 }, data: v.data.slice(0, 20), quantity: 'mu' as const, muWater: 0.02 });

describe('volumes in slabs', () => {
  it('splits into slabs of whole slices and reads back exactly', async () => {
    const store = freshStore();
    const v = volume();
    // 3 slices of 20 voxels per slab: slabs of 3, 3 and 1 slices.
    const { info, entries } = volumeEntries('result', 'r1', v, 60);
    expect(info).toMatchObject({ slicesPerSlab: 3, slabs: 3, fovHalfHeight: 4 });
    expect(entries.map(([, s]) => [s.k0, s.slices])).toEqual([[0, 3], [3, 3], [6, 1]]);
    await putAll(entries, store);
    const back = await loadVolume('result', 'r1', info, store);
    expect(back.data).toEqual(v.data);
    expect(back.grid).toEqual(v.grid);
    // A slab that does not fit its description is refused, naming the record.
    const damaged = { ...entries[1][1], data: new Float32Array(10) };
    await set(slabKey('result', 'r1', 1), damaged, store);
    await expect(loadVolume('result', 'r1', info, store)).rejects.toThrow(RecordError);
    await expect(loadVolume('result', 'r1', info, store)).rejects.toThrow(/result-volume\/r1\/00001: slab 1 of "r1" with 10 voxels/);
  });

  it('a result keeps its volume with it: saved in one transaction, deleted with it', async () => {
    const store = freshStore();
    const s = await saveScan({ ...scanInput(), reference: slice(volume()), referenceVolume: volume(9) }, store);
    expect(s.referenceVolume?.grid.nz).toBe(9);
    expect((await loadReferenceVolume(s.id, store)).data).toEqual(volume(9).data);
    const r = await saveResult(resultInput(s.id), slice(volume()), store, volume());
    expect(r.volume).toMatchObject({ slabs: 1, grid: volume().grid });
    expect(r.bytes).toBe(20 * 4 + 140 * 4);
    const back = await loadResultVolume(r.id, store);
    expect(back.volume.data).toEqual(volume().data);
    await deleteResult(r.id, store);
    expect(await keysWithPrefix('result-volume/', store)).toEqual([]);
    const r2 = await saveResult(resultInput(s.id), slice(volume()), store, volume());
    await deleteScan(s.id, store);
    expect(await listResults(undefined, store)).toEqual([]);
    expect(await keysWithPrefix('result-volume/', store)).toEqual([]);
    expect(await keysWithPrefix('scan-volume/', store)).toEqual([]);
    expect(await get(`result/${r2.id}`, store)).toBeUndefined();
  });

  it('an image result has no volume to load', async () => {
    const store = freshStore();
    const s = await saveScan(scanInput(), store);
    const r = await saveResult(resultInput(s.id), slice(volume()), store);
    await expect(loadResultVolume(r.id, store)).rejects.toThrow(/holds an image, not a volume/);
    await expect(loadReferenceVolume(s.id, store)).rejects.toThrow(/has no reference volume/);
  });
});
