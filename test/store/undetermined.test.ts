// A DBP result's undetermined mask kept with its pixels in storage: stored and read back with the
// image, counted in the result's bytes; a result stored before masks were kept (or by another
// method) has none and still loads; a bad mask is refused and stores nothing; a damaged stored
// mask is reported, never drawn. Through the page's run path (the coordinator), a DBP run keeps
// the mask its geometry implies: every pixel outside the measured field of view, whose radius
// follows from the detector alone (parallel beam: half the detector's width, common practice),
// and its comparison with the ground truth leaves those pixels out.
import 'fake-indexeddb/auto';
import { createStore, get, set } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import type { Geometry } from '../../web/core/geometry/types';
import { gridOrigin, squareGrid } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { keysWithPrefix } from '../../web/store/db';
import { keys, RecordError, SCHEMA_VERSION } from '../../web/store/records';
import { listResults, loadResultImage, saveResult } from '../../web/store/results';
import { saveScan } from '../../web/store/scans';
import { Coordinator } from '../../web/worker/coordinator';
import { localWorkspace } from '../helpers/engine';

let n = 0;
const freshStore = () => createStore(`undetermined-${n++}`, 'records');

const small: Geometry = {
  kind: 'fan', detector: { shape: 'flat', channels: 4, rows: 1, pitch: [1, 1], offset: [0, 0] },
  sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 120, count: 3 },
};
const scanInput = () => ({ name: 'scan', scan: { geometry: small, data: new Float32Array(12), muWater: 0.02 }, source: { type: 'file' as const, fileNames: ['a.nrrd'] } });
const resultInput = (scanId: string) => ({ scanId, name: 'DBP', recipe: { method: 'dbp' }, warnings: [], report: {}, metrics: null, seconds: 1 });
/** A 3 x 2 image (x fastest) and a mask marking its first column. */
const image = () => ({ grid: { nx: 3, ny: 2, dx: 1, dy: 1, cx: 0, cy: 0 }, data: Float32Array.from([0, 2, 3, 0, 5, 6]), quantity: 'mu' as const, muWater: 0.02, fovRadius: 1 });
const mask = () => Uint8Array.from([1, 0, 0, 1, 0, 0]);

describe('the undetermined mask in storage', () => {
  it('round-trips with the image as a Uint8Array and counts in the result\'s bytes', async () => {
    const store = freshStore();
    const s = await saveScan(scanInput(), store);
    const r = await saveResult(resultInput(s.id), image(), store, undefined, undefined, { undetermined: mask() });
    expect(r.bytes).toBe(6 * 4 + 6);
    const back = await loadResultImage(r.id, store);
    expect(back.image).toEqual(image());
    expect(back.undetermined).toBeInstanceOf(Uint8Array);
    expect(Array.from(back.undetermined!)).toEqual(Array.from(mask()));
  });

  it('a result without a mask (another method, or DBP stored before masks were kept) loads without one', async () => {
    const store = freshStore();
    const s = await saveScan(scanInput(), store);
    const plain = await saveResult(resultInput(s.id), image(), store);
    expect((await loadResultImage(plain.id, store)).undetermined).toBeUndefined();
    // The records exactly as a build without masks wrote them (schema 1 and 2 alike).
    for (const schema of [1, SCHEMA_VERSION]) {
      const id = `old-${schema}`;
      await set(keys.result(id), { ...resultInput(s.id), schema, kind: 'result', id, createdAt: 1, grid: image().grid, muWater: 0.02, fovRadius: 1, bytes: 24 }, store);
      await set(keys.resultData(id), { schema, kind: 'result-data', id, data: image().data }, store);
      const old = await loadResultImage(id, store);
      expect(old.undetermined).toBeUndefined();
      expect(Array.from(old.image.data)).toEqual(Array.from(image().data));
    }
  });

  it('a mask that does not fit the image is refused by name, and nothing is stored', async () => {
    const store = freshStore();
    const s = await saveScan(scanInput(), store);
    const bad: Array<[unknown, RegExp]> = [
      [new Uint8Array(5), /result undetermined mask: got 5 pixels, expected 6 \(the image's 3 x 2\)/],
      [Uint8Array.from([0, 2, 0, 0, 0, 0]), /result undetermined mask: pixel 1 holds 2, expected 0 or 1/],
      [new Float32Array(6), /result undetermined mask: got \[object Float32Array\], expected a Uint8Array of 6 pixels/],
    ];
    for (const [m, why] of bad) {
      const err = await saveResult(resultInput(s.id), image(), store, undefined, undefined, { undetermined: m as Uint8Array }).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(InputError);
      expect((err as InputError).message).toMatch(why);
    }
    expect(await listResults(s.id, store)).toEqual([]);
    expect(await keysWithPrefix('result-data/', store)).toEqual([]);
  });

  it('a damaged stored mask is reported, not drawn', async () => {
    const store = freshStore();
    const s = await saveScan(scanInput(), store);
    const r = await saveResult(resultInput(s.id), image(), store, undefined, undefined, { undetermined: mask() });
    const data = await get(keys.resultData(r.id), store) as Record<string, unknown>;
    await set(keys.resultData(r.id), { ...data, undetermined: new Uint8Array(4) }, store);
    await expect(loadResultImage(r.id, store)).rejects.toThrow(RecordError);
    await expect(loadResultImage(r.id, store)).rejects.toThrow(/undetermined mask: got 4 pixels, expected 6/);
  });
});

describe('a DBP run in the page keeps its mask', () => {
  it('the stored mask marks exactly the pixels outside the field of view the detector measures', async () => {
    // A complete parallel-beam scan (no view truncated: DBP needs no knowledge): 96 channels of
    // 1 mm measure a disk of radius 48 mm; the 64 x 1.75 mm grid reaches 56 mm out.
    const geometry: Geometry = { kind: 'parallel', detector: { shape: 'flat', channels: 96, rows: 1, pitch: [1, 1], offset: [0, 0] }, anglesDeg: { start: 0, step: 1.5, count: 120 } };
    const phantom = { ...sheppLogan('modified', 40, 0.02), muWater: 0.02 };
    const store = freshStore();
    const c = new Coordinator({ openWorkspace: () => localWorkspace(2), sharedMemory: false, store });
    const truth = { grid: squareGrid(64, 1.75), data: rasterize(phantom, squareGrid(64, 1.75), 2) };
    const s = await saveScan({ name: 'complete', scan: { geometry, data: analyticSinogram(phantom, geometry, 2), muWater: 0.02 }, reference: truth, source: { type: 'file', fileNames: ['p.nrrd'] } }, store);
    const meta = await c.run(s.id, { method: 'dbp', grid: { size: 64, pixel: 1.75 } }, undefined, {});
    const { image: img, undetermined } = await loadResultImage(meta.id, store);
    expect(undetermined).toBeDefined();
    const g = img.grid;
    expect(g).toEqual(squareGrid(64, 1.75));
    const fov = 48;
    const { x0, y0 } = gridOrigin(g);
    let marked = 0;
    for (let q = 0; q < g.nx * g.ny; q++) {
      const r = Math.hypot(x0 + (q % g.nx) * g.dx, y0 + Math.floor(q / g.nx) * g.dy);
      // Half a pixel either side of the field's edge is left to the code's own radius (its FOV is
      // the outermost channel's centre or edge, a half-pitch choice).
      if (Math.abs(r - fov) <= 0.5 + g.dx / 2) continue;
      expect(undetermined![q]).toBe(r > fov ? 1 : 0);
      marked += undetermined![q];
    }
    expect(marked).toBeGreaterThan(0);
    const report = meta.report.dbp as { undetermined: { pixels: number } };
    expect(report.undetermined.pixels).toBe(undetermined!.reduce((a, v) => a + v, 0));
    expect(meta.bytes).toBe(g.nx * g.ny * 5);
    // The comparison with the ground truth leaves the undetermined pixels out of every figure.
    expect(meta.metrics!.regions.image!.pixels).toBe(g.nx * g.ny - report.undetermined.pixels);
    expect(meta.metrics!.notes).toContain(`${report.undetermined.pixels} pixels the image does not determine are left out of every figure`);
  });
});
