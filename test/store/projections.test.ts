// Projections in chunks of views (fake-indexeddb in Node): written in one transaction that a
// failure or a cancel leaves empty, read back exactly across chunk boundaries, the preview row,
// damaged chunks refused, and scans stored by the previous layout (one record) still opened.
import 'fake-indexeddb/auto';
import { createStore, set } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import { CancelledError, InputError } from '../../web/core/errors';
import type { Geometry } from '../../web/core/geometry/types';
import { scanSource } from '../../web/core/projection-source';
import { keysWithPrefix } from '../../web/store/db';
import { chunkKey, chunkViewsFor, loadPreview, storedProjections } from '../../web/store/projections';
import { RecordError } from '../../web/store/records';
import { deleteScan, getScanMeta, listScans, loadScan, saveScan } from '../../web/store/scans';

let n = 0;
const freshStore = () => createStore(`projections-${n++}`, 'records');

// 512 x 384 cells: 768 KiB per view, so ten views per 8 MiB chunk; 25 views, three chunks.
const geometry: Geometry = {
  kind: 'cone', detector: { shape: 'flat', channels: 512, rows: 384, pitch: [0.8, 0.8], offset: [0, 0] },
  sourceIsocenter: 750, sourceDetector: 1200, anglesDeg: { start: 0, step: 14, count: 25 },
};
const frame = 512 * 384;
const data = Float32Array.from({ length: 25 * frame }, (_, i) => (i % 1009) / 1000);

/** Exact equality of two arrays (a loop: deep equality is slow on millions of values). */
function same(a: Float32Array, b: Float32Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}
const input = (d = data) => ({ name: 'panel', scan: { geometry, data: d, muWater: 0.02 }, source: { type: 'file' as const, fileNames: ['p.nrrd'] } });

describe('projections in chunks', () => {
  it('are stored in chunks sized from the panel and read back exactly across chunks', async () => {
    const store = freshStore();
    // A C-arm panel of 1024 x 768 cells takes two views per chunk.
    expect(chunkViewsFor({ ...geometry, detector: { ...geometry.detector, channels: 1024, rows: 768 } })).toBe(2);
    expect(chunkViewsFor(geometry)).toBe(10);
    const meta = await saveScan(input(), store);
    expect(meta.projections).toEqual({ viewsPerChunk: 10, chunks: 3 });
    expect(await keysWithPrefix(`scan-proj/${meta.id}/`, store)).toHaveLength(3);
    const src = storedProjections(meta, store);
    expect(same(await src.read(7, 23), data.subarray(7 * frame, 23 * frame))).toBe(true);
    expect(same((await loadScan(meta.id, store)).scan.data, data)).toBe(true);
    // The preview is the row nearest the orbit plane (row 191.5 from the edge: row 192).
    const p = await loadPreview(meta, store);
    expect(p.row).toBe(192);
    expect(same(p.data.subarray(13 * 512, 14 * 512), data.subarray(13 * frame + 192 * 512, 13 * frame + 193 * 512))).toBe(true);
    await deleteScan(meta.id, store);
    expect(await keysWithPrefix('', store)).toEqual([]);
  });

  it('a source that fails or a cancel mid-way stores nothing', async () => {
    const store = freshStore();
    const broken = { ...scanSource({ geometry, data }), read: async (v0: number, v1: number) => {
      if (v0 >= 4) throw new InputError('frame 5: cannot be read');
      return data.subarray(v0 * frame, v1 * frame);
    } };
    await expect(saveScan({ ...input(), scan: broken }, store)).rejects.toThrow(/frame 5: cannot be read/);
    expect(await keysWithPrefix('', store)).toEqual([]);
    const ctl = new AbortController();
    await expect(saveScan(input(), store, { signal: ctl.signal, onProgress: (f) => (f > 0.5 ? ctl.abort() : undefined) })).rejects.toThrow(CancelledError);
    expect(await keysWithPrefix('', store)).toEqual([]);
    const nan = data.slice();
    nan[21 * frame + 5] = NaN;
    await expect(saveScan(input(nan), store, { inspect: (d) => { if (d.some((x) => Number.isNaN(x))) throw new InputError('scan data: NaN'); } })).rejects.toThrow(/NaN/);
    expect(await listScans(store)).toEqual([]);
  });

  it('refuses a damaged chunk, naming the record', async () => {
    const store = freshStore();
    const meta = await saveScan(input(), store);
    await set(chunkKey(meta.id, 1), { schema: 2, kind: 'projection-chunk', owner: meta.id, index: 1, v0: 10, views: 10, data: new Float32Array(10) }, store);
    await expect(storedProjections(meta, store).read(0, 25)).rejects.toThrow(RecordError);
    await expect(storedProjections(meta, store).read(12, 13)).rejects.toThrow(/chunk 1 of .* with 10 values from view 10, expected chunk 1 of .* with 1966080 values from view 10/);
  });

  it('opens a scan stored by the previous layout (schema 1: one record of projections)', async () => {
    const store = freshStore();
    const small: Geometry = { ...geometry, detector: { ...geometry.detector, channels: 4, rows: 3 }, anglesDeg: { start: 0, step: 50, count: 7 } };
    const old = Float32Array.from({ length: 7 * 12 }, (_, i) => i);
    await set('scan/old', { schema: 1, kind: 'scan', id: 'old', name: 'old scan', createdAt: 1, geometry: small, source: { type: 'file', fileNames: ['o.nrrd'] }, bytes: 336, hasReference: false, warnings: [] }, store);
    await set('scan-data/old', { schema: 1, kind: 'scan-data', id: 'old', projections: old }, store);
    const meta = await getScanMeta('old', store);
    expect((await loadScan('old', store)).scan.data).toEqual(old);
    expect(await storedProjections(meta, store).read(2, 4)).toEqual(old.subarray(24, 48));
    expect((await loadPreview(meta, store)).data).toEqual(Float32Array.from({ length: 28 }, (_, i) => old[Math.floor(i / 4) * 12 + 4 + (i % 4)]));
    await deleteScan('old', store);
    expect(await keysWithPrefix('', store)).toEqual([]);
  });
});
