// The DBP method end to end on small scans: complete data against FBP, fan against parallel, a
// truncated scan with a known region against FBP with water extension, the undetermined mask,
// and bad input.
import { describe, expect, it } from 'vitest';
import { compareImages } from '../../web/core/compare';
import type { Geometry } from '../../web/core/geometry/types';
import { validateGeometry } from '../../web/core/geometry/validate';
import { gridOrigin, type Image2D } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import type { Scan } from '../../web/core/scan';
import { InputError } from '../../web/core/errors';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { localWorkspace } from '../helpers/engine';
import { clearOfEdges, smallPhantom } from '../helpers/hilbert-phantom';

const phantom = smallPhantom();
const grid = { size: 96, pixel: 1.5 };

function fan(channels: number, views = 360): Geometry {
  return validateGeometry({ kind: 'fan', detector: { shape: 'flat', channels, rows: 1, pitch: [0.5, 0.5], offset: [0, 0] }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 360 / views, count: views } });
}
const parallelFull = validateGeometry({ kind: 'parallel', detector: { channels: 360, pitch: 0.5 }, anglesDeg: { start: 0, step: 0.5, count: 360 } });

function scan(g: Geometry): Scan {
  return { geometry: g, data: analyticSinogram(phantom, g, 2), muWater: phantom.muWater };
}

function truth(): Image2D {
  const g = { nx: grid.size, ny: grid.size, dx: grid.pixel, dy: grid.pixel, cx: 0, cy: 0 };
  return { grid: g, data: rasterize(phantom, g, 4), quantity: 'mu', muWater: phantom.muWater };
}

/** RMS difference (HU) over pixels at least `margin` mm from every edge and inside radius r. */
function rmsAwayFromEdges(a: Image2D, b: Float32Array, r: number, margin = 3): number {
  const { x0, y0 } = gridOrigin(a.grid);
  let s = 0, n = 0;
  for (let j = 0; j < a.grid.ny; j++) {
    for (let i = 0; i < a.grid.nx; i++) {
      const x = x0 + i * a.grid.dx, y = y0 + j * a.grid.dy;
      if (Math.hypot(x, y) > r || !clearOfEdges(phantom, x, y, margin)) continue;
      s += (a.data[j * a.grid.nx + i] - b[j * a.grid.nx + i]) ** 2;
      n++;
    }
  }
  return (1000 * Math.sqrt(s / n)) / phantom.muWater;
}

describe('DBP on complete data', () => {
  it('equals FBP, and fan agrees with parallel', async () => {
    const ws = await localWorkspace(2);
    const par = scan(parallelFull);
    const dbp = await runRecipe(ws, par, validateRecipe({ method: 'dbp', grid }));
    const fbp = await runRecipe(ws, par, validateRecipe({ method: 'fbp', grid }));
    // Away from edges both follow the phantom (outside check against its exact values; measured
    // DBP 3.7 HU, FBP 7.5 HU, fan DBP 10.7 HU with its 1 degree views) and agree with each other
    // (measured 8.1 HU DBP-FBP, 8.4 HU fan-parallel; bounds are regression pins).
    const t = truth();
    expect(rmsAwayFromEdges(dbp.image, t.data, 80)).toBeLessThan(6);
    expect(rmsAwayFromEdges(fbp.image, t.data, 80)).toBeLessThan(10);
    expect(rmsAwayFromEdges(dbp.image, fbp.image.data, 80)).toBeLessThan(12);
    const fanScan = scan(fan(600));
    const dbpFan = await runRecipe(ws, fanScan, validateRecipe({ method: 'dbp', grid }));
    expect(rmsAwayFromEdges(dbpFan.image, t.data, 70)).toBeLessThan(15);
    expect(rmsAwayFromEdges(dbpFan.image, dbp.image.data, 70)).toBeLessThan(12);
    // No view is truncated: every pixel of the field of view is determined.
    const report = dbp.report.dbp as { undetermined: { insideFov: number }; support: string };
    expect(report.undetermined.insideFov).toBe(0);
    expect(report.support).toBe('field of view');
  });
});

/** A scan whose field of view (radius about 38 mm) lies well inside the 132 mm wide body. */
const truncated = () => scan(fan(276));
const knownDisk = { shape: 'circle' as const, x: 0, y: 20, r: 6, hu: 0 };

describe('DBP on a truncated scan', () => {
  it('with a known region: closer to the object inside the field of view than FBP with water extension', async () => {
    const ws = await localWorkspace(2);
    const s = truncated();
    const dbp = await runRecipe(ws, s, validateRecipe({ method: 'dbp', grid, knowledge: { known: [knownDisk] } }));
    const water = await runRecipe(ws, s, validateRecipe({ method: 'fbp', extend: 'water', grid }));
    const fov = dbp.image.fovRadius!;
    const dbpRmse = compareImages(dbp.image, truth(), fov).regions.insideFov!.rmse;
    const waterRmse = compareImages(water.image, truth(), fov).regions.insideFov!.rmse;
    // Outside check against the phantom: DBP with the known region is closer than the extension,
    // over the field of view (measured 42 against 56 HU) and away from edges (25 against 34 HU).
    expect(dbpRmse).toBeLessThan(waterRmse);
    expect(rmsAwayFromEdges(dbp.image, truth().data, fov - 1)).toBeLessThan(rmsAwayFromEdges(water.image, truth().data, fov - 1));
    const report = dbp.report.dbp as { knownRegions: Array<{ resultHu: number }>; undetermined: { insideFov: number; pixels: number } };
    // The known region reads its value (0 HU) within 10 HU (common practice: a calibration tolerance).
    expect(Math.abs(report.knownRegions[0].resultHu)).toBeLessThanOrEqual(10);
    // Every pixel of the field of view is determined; outside it every pixel is marked and air.
    expect(report.undetermined.insideFov).toBe(0);
    const { x0, y0 } = gridOrigin(dbp.image.grid);
    const g = dbp.image.grid;
    let outside = 0;
    for (let q = 0; q < g.nx * g.ny; q++) {
      const x = x0 + (q % g.nx) * g.dx, y = y0 + Math.floor(q / g.nx) * g.dy;
      const out = Math.hypot(x, y) > fov;
      expect(dbp.undetermined![q]).toBe(out ? 1 : 0);
      if (out) { expect(dbp.image.data[q]).toBe(0); outside++; }
    }
    expect(report.undetermined.pixels).toBe(outside);
    expect(dbp.warnings.some((w) => w.includes('outside the measured field of view'))).toBe(true);
  });
});

describe('DBP with the outline where the field of view holds air', () => {
  it('the outline is checked against what the data show, not against the whole field', async () => {
    // A field of view (radius about 58 mm) wider than the body is tall (semi-axis 50 mm): it
    // reaches the air above and below the body, which the outline (the body's own ellipse) leaves out.
    const ws = await localWorkspace(2);
    const s = scan(fan(420));
    const outline = { shape: 'ellipse' as const, cx: 0, cy: 0, a: 67, b: 51 };
    const dbp = await runRecipe(ws, s, validateRecipe({ method: 'dbp', grid, knowledge: { known: [knownDisk], outline } }));
    const water = await runRecipe(ws, s, validateRecipe({ method: 'fbp', extend: 'water', grid }));
    const fov = dbp.image.fovRadius!;
    expect(fov).toBeGreaterThan(52);
    // Outside check against the phantom: closer to it inside the field than FBP with water extension.
    expect(compareImages(dbp.image, truth(), fov).regions.insideFov!.rmse).toBeLessThan(compareImages(water.image, truth(), fov).regions.insideFov!.rmse);
    // An outline that cuts through what the data show in the field is still refused.
    await expect(runRecipe(ws, s, validateRecipe({ method: 'dbp', grid, knowledge: { known: [knownDisk], outline: { ...outline, a: 40 } } }))).rejects.toThrow(/must enclose the object/);
  });
});

/** A mask of two small disks: the chords through its centroid (between them) mostly miss it. */
function twoDisks(): Image2D {
  const g = { nx: grid.size, ny: grid.size, dx: grid.pixel, dy: grid.pixel, cx: 0, cy: 0 };
  const { x0, y0 } = gridOrigin(g);
  const data = new Float32Array(g.nx * g.ny);
  for (let q = 0; q < data.length; q++) {
    const x = x0 + (q % g.nx) * g.dx, y = y0 + Math.floor(q / g.nx) * g.dy;
    if (Math.hypot(x + 15, y - 20) <= 4 || Math.hypot(x + 15, y + 10) <= 4) data[q] = 1;
  }
  return { grid: g, data, quantity: 'mu' };
}

describe('DBP: what is not determined', () => {
  it('chords that miss the known region leave their pixels undetermined, marked and air', async () => {
    const ws = await localWorkspace(1);
    const masks = { 'two.nrrd': twoDisks() };
    const r = await runRecipe(ws, truncated(), validateRecipe({ method: 'dbp', grid, knowledge: { known: [{ shape: 'mask', input: 'two.nrrd', hu: 0 }] } }), {}, { masks });
    const report = r.report.dbp as { undetermined: { insideFov: number; chords: number }; chords: number };
    expect(report.undetermined.chords).toBeGreaterThan(0);
    expect(report.undetermined.chords).toBeLessThan(report.chords);
    expect(report.undetermined.insideFov).toBeGreaterThan(0);
    expect(r.warnings.some((w) => /of the field of view is not determined/.test(w))).toBe(true);
    for (let q = 0; q < r.image.data.length; q++) if (r.undetermined![q]) expect(r.image.data[q]).toBe(0);
    // Every pixel is a number: not-determined pixels are filled, never NaN.
    expect(r.image.data.every(Number.isFinite)).toBe(true);
  });

  it('the same result on one and on two workers', async () => {
    const recipe = validateRecipe({ method: 'dbp', grid: { size: 48, pixel: 2 }, knowledge: { known: [knownDisk] } });
    const one = await runRecipe(await localWorkspace(1), truncated(), recipe);
    const two = await runRecipe(await localWorkspace(2), truncated(), recipe);
    expect(Array.from(two.image.data)).toEqual(Array.from(one.image.data));
  });
});

describe('DBP: bad input', () => {
  const run = async (s: Scan, knowledge?: object) => runRecipe(await localWorkspace(1), s, validateRecipe({ method: 'dbp', grid, ...(knowledge ? { knowledge } : {}) }));
  it('a truncated scan and no known region: the interior is not determined', async () => {
    await expect(run(truncated())).rejects.toThrow(InputError);
    await expect(run(truncated())).rejects.toThrow(/not determined by the data.*known value.*--known/);
    // The page says it in its own words (no command-line option).
    const err = await run(truncated()).catch((e: InputError) => e);
    expect((err as InputError).pageMessage).toMatch(/known value inside the field of view \(draw it/);
    expect((err as InputError).pageMessage).not.toMatch(/--/);
  });
  it('DBP cannot be the prior of the prior-guided method (it leaves the grid outside the field of view undetermined)', () => {
    expect(() => validateRecipe({ method: 'prior', prior: { source: 'recipe', recipe: { method: 'dbp' } } })).toThrow(/prior\.recipe\.method: got "dbp".*outside the field of view/);
  });
  it('an outline alone does not determine the interior either, and says so', async () => {
    await expect(run(truncated(), { outline: { shape: 'ellipse', cx: 0, cy: 0, a: 70, b: 55 } })).rejects.toThrow(/outline alone/);
  });
  it('a known region outside the field of view is named', async () => {
    await expect(run(truncated(), { known: [{ ...knownDisk, y: 60 }] })).rejects.toThrow(/known region 1 .*outside the measured field of view/);
  });
  it('known values need mu of water', async () => {
    const s = { ...truncated(), muWater: undefined };
    await expect(run(s, { known: [knownDisk] })).rejects.toThrow(/mu of water/);
  });
  it('fewer views than a half turn', async () => {
    const g = validateGeometry({ kind: 'parallel', detector: { channels: 360, pitch: 0.5 }, anglesDeg: { start: 0, step: 0.5, count: 180 } });
    await expect(run(scan(g))).rejects.toThrow(/less than a half turn/);
  });
  it('a cone-beam scan', async () => {
    const g = validateGeometry({ kind: 'cone', detector: { shape: 'flat', channels: 64, rows: 8, pitch: [1, 1], offset: [0, 0] }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 10, count: 36 } });
    await expect(run({ geometry: g, data: new Float32Array(64 * 8 * 36) })).rejects.toThrow(/2D/);
  });
});
