// HU calibration of a stored scan in the page (coordinator op "calibrate", local engine,
// fake-indexeddb). A water cylinder scanned without mu_water is reconstructed; a circle marked
// as water in the image sets mu_water, and the rest of the water then reads 0 +/- 5 HU (the
// project's acceptance bar for calibration on a simulated scan). mu_water of water at
// 60 keV is 0.02059 /mm (NIST SRD 126; REFERENCES.md [nist-srd126]: 200 mm of water gives a line integral of
// 4.118). HU = 1000 (mu - mu_w) / mu_w (ICRP Publication 129, REFERENCES.md [hu-definition]).
import 'fake-indexeddb/auto';
import { createStore } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import { compareImages } from '../../web/core/compare';
import { InputError } from '../../web/core/errors';
import type { Geometry } from '../../web/core/geometry/types';
import { gridOrigin, squareGrid } from '../../web/core/image';
import type { EllipsePhantom } from '../../web/core/phantoms/ellipse';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { getResultMeta, loadResultImage } from '../../web/store/results';
import { getScanMeta, saveScan } from '../../web/store/scans';
import { Coordinator } from '../../web/worker/coordinator';
import { localWorkspace } from '../helpers/engine';

const MU_WATER = 0.02059;
const cylinder: EllipsePhantom = { name: 'water cylinder', muWater: MU_WATER, radius: 40, ellipses: [{ cx: 0, cy: 0, a: 40, b: 40, phiDeg: 0, value: MU_WATER }] };
const geometry: Geometry = { kind: 'parallel', detector: { shape: 'flat', channels: 128, rows: 1, pitch: [1, 1], offset: [0, 0] }, anglesDeg: { start: 0, step: 1, count: 180 } };
const grid = squareGrid(96, 1);

let n = 0;
async function setUp(withReference: boolean) {
  const store = createStore(`calibrate-${n++}`, 'records');
  const c = new Coordinator({ openWorkspace: () => localWorkspace(2), sharedMemory: false, store });
  const scan = { geometry, data: analyticSinogram(cylinder, geometry, 4) };
  const reference = withReference ? { grid, data: rasterize(cylinder, grid, 4), muWater: MU_WATER } : undefined;
  const s = await saveScan({ name: 'cylinder', scan, source: { type: 'file', fileNames: [] }, reference }, store);
  const r = await c.run(s.id, { method: 'fbp', filter: 'hann', grid: { size: 96, pixel: 1 } }, undefined, {});
  return { store, c, scanId: s.id, resultId: r.id };
}

/** Mean and SD of HU within `radius` of (cx, cy), with the image's stored mu_water. */
function huIn(image: { grid: typeof grid; data: Float32Array; muWater?: number }, cx: number, cy: number, radius: number) {
  const { x0, y0 } = gridOrigin(image.grid);
  const v: number[] = [];
  for (let k = 0; k < image.data.length; k++) {
    const x = x0 + (k % image.grid.nx) * image.grid.dx, y = y0 + Math.floor(k / image.grid.nx) * image.grid.dy;
    if (Math.hypot(x - cx, y - cy) < radius) v.push((1000 * (image.data[k] - image.muWater!)) / image.muWater!);
  }
  const mean = v.reduce((a, b) => a + b, 0) / v.length;
  return { mean, n: v.length };
}

describe('HU calibration of a stored scan', () => {
  it('a circle marked as water sets mu_water; the rest of the water then reads 0 +/- 5 HU in every result', async () => {
    const { store, c, scanId, resultId } = await setUp(false);
    expect((await getScanMeta(scanId, store)).muWater).toBeUndefined();
    expect((await getResultMeta(resultId, store)).muWater).toBeUndefined();
    const out = await c.handle({ op: 'calibrate', request: { scanId, resultId, region: { cx: 0, cy: 0, radius: 15 }, materialHu: 0 } });
    expect(out.results).toBe(1);
    expect(out.measurement!.pixels).toBeGreaterThan(600);
    expect(Math.abs(out.scan.muWater! / MU_WATER - 1)).toBeLessThan(0.01);
    expect(out.scan.calibration).toMatchObject({ method: 'region', resultId, materialHu: 0, region: { cx: 0, cy: 0, radius: 15 } });
    // Stored with the scan and with each result.
    expect((await getScanMeta(scanId, store)).muWater).toBe(out.scan.muWater);
    const { image, meta } = await loadResultImage(resultId, store);
    expect(meta.muWater).toBe(out.scan.muWater);
    // Water away from the marked circle: 0 +/- 5 HU.
    const away = huIn(image, 22, -10, 8);
    expect(away.n).toBeGreaterThan(150);
    expect(Math.abs(away.mean)).toBeLessThan(5);
    // A reconstruction run after the calibration takes the scan's value.
    const later = await c.run(scanId, { method: 'fbp', grid: { size: 64, pixel: 1.5 } }, undefined, {});
    expect(later.muWater).toBe(out.scan.muWater);
  });

  it('a material of known HU: mu_water = mean mu / (1 + HU / 1000); by hand: the value given', async () => {
    const { store, c, scanId, resultId } = await setUp(false);
    // The water marked as +40 HU (as if it were soft tissue) gives mu_water 1.04 times lower.
    const asTissue = await c.handle({ op: 'calibrate', request: { scanId, resultId, region: { cx: 0, cy: 0, radius: 15 }, materialHu: 40 } });
    const asWater = await c.handle({ op: 'calibrate', request: { scanId, resultId, region: { cx: 0, cy: 0, radius: 15 }, materialHu: 0 } });
    expect(asWater.scan.muWater! / asTissue.scan.muWater!).toBeCloseTo(1.04, 10);
    const hand = await c.handle({ op: 'calibrate', request: { scanId, muWater: 0.0195 } });
    expect(hand.scan).toMatchObject({ muWater: 0.0195, calibration: { method: 'hand' } });
    expect((await getResultMeta(resultId, store)).muWater).toBe(0.0195);
  });

  it('recomputes the comparisons with the reference, which are in HU', async () => {
    const { store, c, scanId, resultId } = await setUp(true);
    const before = (await getResultMeta(resultId, store)).metrics!;
    await c.handle({ op: 'calibrate', request: { scanId, muWater: 2 * MU_WATER } });
    const after = (await getResultMeta(resultId, store)).metrics!;
    const { image } = await loadResultImage(resultId, store);
    const direct = compareImages(image, { grid, data: rasterize(cylinder, grid, 4), quantity: 'mu', muWater: MU_WATER }, image.fovRadius);
    expect(after.regions.image!.rmse).toBeCloseTo(direct.regions.image!.rmse, 6);
    // Twice mu_water halves every HU difference.
    expect(after.regions.image!.rmse / before.regions.image!.rmse).toBeCloseTo(0.5, 6);
  });

  it('refuses a value that cannot be right, and changes nothing', async () => {
    const { store, c, scanId, resultId } = await setUp(false);
    const second = await saveScan({ name: 'second', scan: { geometry, data: analyticSinogram(cylinder, geometry, 4) }, source: { type: 'file', fileNames: [] } }, store);
    const other = { resultId: (await c.run(second.id, { method: 'fbp', grid: { size: 32, pixel: 3 } }, undefined, {})).id };
    const cases: Array<[unknown, RegExp]> = [
      [{ scanId, muWater: 5 }, /mu_water: got 5, expected the attenuation of water in 1\/mm/],
      [{ scanId, muWater: Number.NaN }, /mu_water: got null/],
      [{ scanId, resultId, region: { cx: 0, cy: 0, radius: 0.5 }, materialHu: 0 }, /the marked region covers \d pixels, expected at least 9/],
      [{ scanId, resultId, region: { cx: 200, cy: 0, radius: 20 }, materialHu: 0 }, /covers 0 pixels/],
      [{ scanId, resultId, region: { cx: 0, cy: 0, radius: 15 }, materialHu: -1000 }, /reference HU: got -1000/],
      [{ scanId, resultId: other.resultId, region: { cx: 0, cy: 0, radius: 15 }, materialHu: 0 }, /belongs to another scan/],
      // Air outside the cylinder marked as water: not an attenuation water can have.
      [{ scanId, resultId, region: { cx: 44.5, cy: 0, radius: 3 }, materialHu: 0 }, /water calibration: .*(positive attenuation|the measured mu_water: got)/],
    ];
    for (const [request, message] of cases) {
      const err = await c.handle({ op: 'calibrate', request: request as never }).catch((e) => e);
      expect(err).toBeInstanceOf(InputError);
      expect(err.message).toMatch(message);
    }
    expect((await getScanMeta(scanId, store)).muWater).toBeUndefined();
    expect((await getResultMeta(resultId, store)).muWater).toBeUndefined();
  });
});
