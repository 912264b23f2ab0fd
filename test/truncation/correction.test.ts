import { describe, expect, it } from 'vitest';
import { compareImages } from '../../web/core/compare';
import { cupping } from '../../web/core/cupping';
import { cropDetector, presetGeometry } from '../../web/core/geometry/presets';
import { validateGeometry } from '../../web/core/geometry/validate';
import { fovRadius } from '../../web/core/geometry/view-vectors';
import type { Geometry } from '../../web/core/geometry/types';
import { squareGrid } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { thorax, waterCylinder } from '../../web/core/phantoms/thorax';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { displacedDetectorWeight, displacement } from '../../web/core/recon/displaced-detector';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { EXTEND_METHODS } from '../../web/core/truncation/extend-methods';
import { localWorkspace } from '../helpers/engine';

describe('truncation correction of a uniform water cylinder', () => {
  // Detectors that see a 55 mm radius FOV of a 100 mm radius water cylinder.
  const fan = (shape: 'flat' | 'curved') => validateGeometry({ kind: 'fan', detector: { shape, channels: 200, pitch: 1 }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 1, count: 360 } });
  const geometries: Array<[string, Geometry]> = [
    ['fan beam, flat detector', fan('flat')],
    ['fan beam, curved detector', fan('curved')],
    ['parallel beam', validateGeometry({ kind: 'parallel', detector: { channels: 220, pitch: 0.5 }, anglesDeg: { start: 0, step: 1, count: 180 } })],
  ];
  const p = waterCylinder(100);
  const mu = p.muWater;

  it.each(geometries)('%s: uncorrected FBP shows the bright rim; water cylinder extrapolation is flat within 3%%', async (_, g) => {
    const scan = { geometry: g, data: analyticSinogram(p, g), muWater: mu };
    const fov = fovRadius(g);
    const ws = await localWorkspace(2);
    const recipe = { method: 'fbp', filter: 'shepp-logan', grid: { size: 112, pixel: 1 } };
    const none = await runRecipe(ws, scan, validateRecipe(recipe));
    const water = await runRecipe(ws, scan, validateRecipe({ ...recipe, extend: 'water' }));
    expect(none.image.grid).toEqual(squareGrid(112, 1));
    // Known artefact of truncated FBP (REFERENCES.md [cupping], [ohnesorge-2000]: the peripheral bright
    // band): the rim is brighter than the centre by a clear margin.
    expect(cupping(none.image, fov)!.ratio).toBeGreaterThan(1.3);
    // Fact of the trade: water cylinder extrapolation removes most cupping for near-cylindrical
    // objects. Every ring of the radial profile inside the FOV within 3% of mu_water.
    const cWater = cupping(water.image, fov)!;
    expect(Math.abs(cWater.ratio - 1)).toBeLessThan(0.03);
    for (const ring of cWater.profile.image) expect(Math.abs(ring / mu - 1)).toBeLessThan(0.03);
    expect(water.report.extension).toMatchObject({ method: 'water', muAssumed: false });
    // The fitted reach: the cylinder's edge is 100 mm from the isocentre.
    const ext = water.report.extension as { meanTailMm: { left: number; right: number } };
    expect(Math.abs(ext.meanTailMm.left - (100 - fov))).toBeLessThan(3);
    expect(Math.abs(ext.meanTailMm.right - (100 - fov))).toBeLessThan(3);
  });
});

describe('truncation correction of the thorax demo', () => {
  // The 'demo' geometry cropped to 345 channels: the FOV (radius 102 mm) covers about 60% of
  // the 340 mm body width. 360 views (1 degree) keep the test small.
  const demo = presetGeometry('demo')!;
  const { geometry: g } = cropDetector(validateGeometry({ ...demo, anglesDeg: { start: 0, step: 1, count: 360 } }), 345);
  const p = thorax();
  const scan = { geometry: g, data: analyticSinogram(p, g), muWater: p.muWater };
  const grid = squareGrid(224, 1);
  const truth = { grid, data: rasterize(p, grid, 3), quantity: 'mu' as const, muWater: p.muWater };

  it('every extension lowers the inside-FOV RMSE against none; water at least halves it', async () => {
    const ws = await localWorkspace(2);
    const rmse: Record<string, number> = {};
    for (const extend of EXTEND_METHODS) {
      const r = await runRecipe(ws, scan, validateRecipe({ method: 'fbp', filter: 'shepp-logan', grid: { size: 224, pixel: 1 }, extend }));
      const c = compareImages(r.image, truth, r.image.fovRadius);
      expect(c.unit).toBe('HU');
      rmse[extend] = c.regions.insideFov!.rmse;
    }
    for (const m of EXTEND_METHODS.filter((x) => x !== 'none')) expect(rmse[m], m).toBeLessThan(rmse.none);
    expect(rmse.water).toBeLessThan(0.5 * rmse.none);
  });

  it('the default grid covers the estimated object, beyond the FOV', async () => {
    const ws = await localWorkspace(2);
    const r = await runRecipe(ws, { ...scan, data: scan.data }, validateRecipe({ method: 'fbp', extend: 'water' }));
    const half = (r.image.grid.nx * r.image.grid.dx) / 2;
    // The body is 170 mm wide on each side; the FOV radius is 102 mm.
    expect(half).toBeGreaterThan(170);
    expect(r.image.grid.nx).toBe(512);
  });
});

describe('displaced detector (one side reaching further, full turn)', () => {
  it('weights conjugate rays to a sum of 1 and lets the long side stand alone', () => {
    // Wang 2002 (displaced-detector.ts): w(x) + w(-x) = 1 for conjugate rays.
    const d = displacement(-0.05, 0.2, 1e-3)!;
    expect(d).toEqual({ half: 0.05, longSide: 1 });
    for (let x = -0.3; x <= 0.3; x += 0.0137) expect(displacedDetectorWeight(x, d) + displacedDetectorWeight(-x, d)).toBeCloseTo(1, 12);
    expect(displacedDetectorWeight(0.1, d)).toBe(1);
    expect(displacedDetectorWeight(-0.1, d)).toBe(0);
    expect(displacedDetectorWeight(0, d)).toBeCloseTo(0.5, 12);
    expect(displacement(-0.2, 0.2 + 1e-4, 1e-3)).toBeUndefined();
  });

  it('reconstructs an object inside the widened FOV without extrapolation, flat within 1%', async () => {
    // Rays reach 80 mm to the left of the isocentre but only 22 mm to the right: a full turn
    // measures every line of a 75 mm water cylinder once or twice.
    const full = validateGeometry({ kind: 'fan', detector: { shape: 'flat', channels: 400, pitch: 1 }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 1, count: 360 } });
    const { geometry: g } = cropDetector(full, 236, 28);
    const p = waterCylinder(75);
    const ws = await localWorkspace(2);
    const r = await runRecipe(ws, { geometry: g, data: analyticSinogram(p, g), muWater: p.muWater }, validateRecipe({ method: 'fbp', grid: { size: 160, pixel: 1 } }));
    const c = cupping(r.image, 70)!;
    for (const ring of c.profile.image) expect(Math.abs(ring / p.muWater - 1)).toBeLessThan(0.01);
  });
});
