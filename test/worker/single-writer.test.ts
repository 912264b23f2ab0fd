// One writer per stored record (coordinator ops, local engine, fake-indexeddb): the page's
// library edits go through the coordinator, each a read-modify-write in one transaction, and a
// long job that writes at its end re-reads what it changes. A calibration that runs while the
// scan is renamed, its geometry edited and one of its results deleted keeps every change and
// brings nothing back; a run whose scan is deleted meanwhile stores nothing. The HU figures
// follow HU = 1000 (mu - mu_water) / mu_water (REFERENCES.md [hu-definition]).
import 'fake-indexeddb/auto';
import { createStore, get } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import type { Geometry } from '../../web/core/geometry/types';
import { squareGrid } from '../../web/core/image';
import { rasterize, type EllipsePhantom } from '../../web/core/phantoms/ellipse';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { keys } from '../../web/store/records';
import { listResults } from '../../web/store/results';
import { getScanMeta, saveScan } from '../../web/store/scans';
import { Coordinator } from '../../web/worker/coordinator';
import { localWorkspace } from '../helpers/engine';

const MU_WATER = 0.02059;
const cylinder: EllipsePhantom = { name: 'water cylinder', muWater: MU_WATER, radius: 40, ellipses: [{ cx: 0, cy: 0, a: 40, b: 40, phiDeg: 0, value: MU_WATER }] };
const geometry: Geometry = { kind: 'parallel', detector: { shape: 'flat', channels: 128, rows: 1, pitch: [1, 1], offset: [0, 0] }, anglesDeg: { start: 0, step: 1, count: 180 } };
const grid = squareGrid(96, 1);

let n = 0;
async function library(results: number) {
  const store = createStore(`single-writer-${n++}`, 'records');
  const c = new Coordinator({ openWorkspace: () => localWorkspace(2), sharedMemory: false, store });
  const scan = { geometry, data: analyticSinogram(cylinder, geometry, 4) };
  const reference = { grid, data: rasterize(cylinder, grid, 4), muWater: MU_WATER };
  const s = await saveScan({ name: 'cylinder', scan, source: { type: 'file', fileNames: [] }, reference }, store);
  const ids: string[] = [];
  for (let k = 0; k < results; k++) ids.push((await c.run(s.id, { method: 'fbp', grid: { size: 96, pixel: 1 } }, `run ${k}`, {})).id);
  return { store, c, scanId: s.id, ids };
}

describe('one writer per stored record', () => {
  it('a calibration during a rename, a geometry edit and a result deletion keeps every change and brings nothing back', async () => {
    const { store, c, scanId, ids } = await library(4);
    const doomed = ids[1];
    const edited: Geometry = { ...geometry, detector: { ...geometry.detector, offset: [0.25, 0] } };
    let edits: Promise<unknown> | undefined;
    const outcome = await c.handle({ op: 'calibrate', request: { scanId, muWater: 0.021 } }, {
      // While the calibration recomputes its results' figures, the page edits the library.
      onProgress: (_, stage) => {
        if (stage !== 'updating the results' || edits !== undefined) return;
        edits = Promise.all([
          c.handle({ op: 'rename-scan', scanId, name: 'renamed during calibration' }),
          c.handle({ op: 'set-geometry', scanId, geometry: edited }),
          c.handle({ op: 'delete-result', resultId: doomed }),
        ]);
      },
    });
    expect(edits).toBeDefined();
    await edits;
    const scan = await getScanMeta(scanId, store);
    expect(scan.name).toBe('renamed during calibration');
    expect(scan.geometry.detector.offset).toEqual([0.25, 0]);
    expect(scan.muWater).toBe(0.021);
    expect(scan.calibration?.method).toBe('hand');
    // The deleted result stays deleted, description and pixels; the others took the new value.
    expect(await get(keys.result(doomed), store)).toBeUndefined();
    expect(await get(keys.resultData(doomed), store)).toBeUndefined();
    const left = await listResults(scanId, store);
    expect(left.map((r) => r.id).sort()).toEqual(ids.filter((id) => id !== doomed).sort());
    for (const r of left) expect(r.muWater).toBe(0.021);
    expect(outcome.results).toBe(3);
    expect(outcome.scan.name).toBe('renamed during calibration');
  });

  it('a run whose scan is deleted meanwhile stores nothing and says why', async () => {
    const { store, c, scanId } = await library(0);
    let deleting: Promise<unknown> | undefined;
    const run = c.handle({ op: 'run', scanId, recipe: { method: 'fbp', grid: { size: 96, pixel: 1 } } }, {
      onProgress: () => {
        deleting ??= c.handle({ op: 'delete-scan', scanId });
      },
    });
    await expect(run).rejects.toThrow(/the scan was deleted while its result was being made; nothing was stored/);
    await deleting;
    expect(await listResults(undefined, store)).toEqual([]);
    expect(await get(keys.scan(scanId), store)).toBeUndefined();
  });

  it('renames and geometry edits are checked, and a refused one changes nothing', async () => {
    const { store, c, scanId } = await library(0);
    await expect(c.handle({ op: 'rename-scan', scanId, name: ' ' })).rejects.toThrow(/name: got " ", expected 1 to 200 characters/);
    await expect(c.handle({ op: 'set-geometry', scanId, geometry: { ...geometry, detector: { ...geometry.detector, channels: 100 } } })).rejects.toThrow(/channels/);
    await expect(c.handle({ op: 'rename-scan', scanId: 'gone', name: 'x' })).rejects.toThrow(/scan\/gone no longer exists/);
    const scan = await getScanMeta(scanId, store);
    expect(scan.name).toBe('cylinder');
    expect(scan.geometry).toEqual(geometry);
  });
});
