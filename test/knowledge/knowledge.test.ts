// Knowledge beyond the data: validation, drawing on a grid, checks against the field of view,
// the command line's words. Areas are checked against elementary geometry (pi r^2, pi a b, the
// shoelace formula: common practice).
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { squareGrid } from '../../web/core/image';
import { cubicGrid } from '../../web/core/volume';
import {
  huToMu, outlineMask, parseKnown, parseOutline, placeKnowledge, polygonArea, regionCoverage, validateKnowledge,
} from '../../web/core/knowledge';
import { validateRecipe } from '../../web/core/recipe/recipe';

const grid = squareGrid(256, 1);
const sum = (a: ArrayLike<number>) => Array.from(a).reduce((s, v) => s + v, 0);

describe('knowledge on a grid', () => {
  it('a circle covers pi r^2 of area, to 1% for r = 10 pixels', () => {
    const c = regionCoverage({ shape: 'circle', x: 12.3, y: -7.9, r: 10, hu: 0 }, grid);
    expect(Math.abs(sum(c) - Math.PI * 100) / (Math.PI * 100)).toBeLessThan(0.01);
  });

  it('an ellipse outline covers pi a b and a polygon its shoelace area, to 1%', () => {
    const e = outlineMask({ shape: 'ellipse', cx: 5, cy: -3, a: 80, b: 50, angleDeg: 30 }, grid);
    expect(Math.abs(sum(e) - Math.PI * 80 * 50) / (Math.PI * 80 * 50)).toBeLessThan(0.01);
    const points: [number, number][] = [[-60, -40], [70, -45], [90, 30], [0, 80], [-70, 20]];
    const p = outlineMask({ shape: 'polygon', points }, grid);
    expect(Math.abs(sum(p) - Math.abs(polygonArea(points))) / Math.abs(polygonArea(points))).toBeLessThan(0.01);
  });

  it('a concave polygon (an L) covers its shoelace area, and points in its notch stay outside', () => {
    const points: [number, number][] = [[-50, -50], [50, -50], [50, -10], [-10, -10], [-10, 60], [-50, 60]];
    const m = outlineMask({ shape: 'polygon', points }, grid);
    expect(Math.abs(sum(m) - Math.abs(polygonArea(points))) / Math.abs(polygonArea(points))).toBeLessThan(0.01);
    const at = (x: number, y: number) => m[Math.round(y + 127.5) * 256 + Math.round(x + 127.5)];
    expect(at(20, 20)).toBe(0);
    expect(at(-30, 20)).toBe(1);
    expect(at(20, -30)).toBe(1);
  });

  it('a cylinder over a z slab covers only the slices inside it', () => {
    const vg = cubicGrid(32, 2, 10, 3); // slice centres at z = -13.5 ... 13.5 mm
    const c = regionCoverage({ shape: 'circle', x: 0, y: 0, r: 6, hu: 0, z: [-5, 5] }, vg);
    const perSlice = Array.from({ length: 10 }, (_, k) => sum(c.subarray(k * 1024, (k + 1) * 1024)));
    expect(perSlice.map((v) => v > 0)).toEqual([false, false, false, true, true, true, true, false, false, false]);
  });

  it('HU becomes attenuation with mu_water (HU = 1000 (mu - mu_w) / mu_w, ICRP 129)', () => {
    expect(huToMu(-1000, 0.02)).toBe(0);
    expect(huToMu(0, 0.02)).toBe(0.02);
    expect(huToMu(1000, 0.02)).toBeCloseTo(0.04, 12);
  });
});

describe('knowledge checked against the field of view', () => {
  const ctx = { grid, fovRadius: 60, muWater: 0.02 };

  it('places regions inside the field of view with their values in mu', () => {
    const placed = placeKnowledge({ known: [{ shape: 'circle', x: 10, y: 10, r: 8, hu: -1000 }] }, ctx);
    expect(placed.regions[0].mu).toBe(0);
    expect(placed.regions[0].name).toContain('known region 1');
  });

  it('refuses a region outside the field of view, outside the grid, or without mu_water, naming it', () => {
    expect(() => placeKnowledge({ known: [{ shape: 'circle', x: 55, y: 0, r: 10, hu: 0 }] }, ctx)).toThrow(/known region 1 .*outside the measured field of view/);
    expect(() => placeKnowledge({ known: [{ shape: 'circle', x: 500, y: 0, r: 10, hu: 0 }] }, ctx)).toThrow(/covers no pixel/);
    expect(() => placeKnowledge({ known: [{ shape: 'circle', x: 0, y: 0, r: 10, hu: 0 }] }, { grid, fovRadius: 60 })).toThrow(/mu of water/);
  });

  it('refuses contradictory regions and an outline smaller than the measured field', () => {
    const two = { known: [{ shape: 'circle' as const, x: 0, y: 0, r: 10, hu: 0 }, { shape: 'circle' as const, x: 5, y: 0, r: 10, hu: 50 }] };
    expect(() => validateKnowledge(two)).toThrow(/contradict/);
    expect(() => placeKnowledge({ outline: { shape: 'ellipse', cx: 0, cy: 0, a: 100, b: 40 } }, ctx)).toThrow(/outline .*must enclose the measured field/);
    expect(placeKnowledge({ outline: { shape: 'ellipse', cx: 0, cy: 0, a: 100, b: 70 } }, ctx).outline).toBeDefined();
  });

  it('with a reconstruction, an outline may leave out air in the field of view but not the object', () => {
    // A disc of water 50 mm across centred at (20, 0) in a field of view of radius 60 mm: an
    // outline round the disc leaves out only air; one that cuts the disc is refused.
    const image = new Float32Array(256 * 256).map((_, q) => (Math.hypot((q % 256) - 127.5 - 20, Math.floor(q / 256) - 127.5) <= 50 ? 0.02 : 0));
    expect(placeKnowledge({ outline: { shape: 'ellipse', cx: 20, cy: 0, a: 55, b: 55 } }, { ...ctx, image }).outline).toBeDefined();
    expect(() => placeKnowledge({ outline: { shape: 'ellipse', cx: 20, cy: 0, a: 55, b: 55 } }, ctx)).toThrow(/must enclose the measured field/);
    expect(() => placeKnowledge({ outline: { shape: 'ellipse', cx: 20, cy: 0, a: 55, b: 30 } }, { ...ctx, image })).toThrow(/outline \(ellipse .*where the data show the object.*must enclose the object/);
  });

  it('refuses a mask that was not given', () => {
    expect(() => placeKnowledge({ known: [{ shape: 'mask', input: 'air.nrrd', hu: -1000 }] }, ctx)).toThrow(/mask "air.nrrd" was not given/);
  });
});

describe('knowledge in recipes and on the command line', () => {
  it('a recipe keeps validated knowledge and refuses malformed values with the field named', () => {
    const r = validateRecipe({ method: 'fbp', knowledge: { known: [{ shape: 'circle', x: 1, y: 2, r: 5, hu: 40 }] } });
    expect(r.knowledge?.known?.[0]).toEqual({ shape: 'circle', x: 1, y: 2, r: 5, hu: 40 });
    expect(() => validateRecipe({ method: 'fbp', knowledge: { known: [{ shape: 'circle', x: 1, y: 2, r: -5, hu: 40 }] } })).toThrow(/known region 1 r: got -5/);
    expect(() => validateRecipe({ method: 'fbp', knowledge: { outline: { shape: 'polygon', points: [[0, 0], [1, 1]] } } })).toThrow(/at least 3 points/);
    expect(validateRecipe({ method: 'fbp', knowledge: {} }).knowledge).toBeUndefined();
  });

  it('parses --known and --outline, telling files from numbers', () => {
    const isFile = (n: string) => n.endsWith('.nrrd');
    expect(parseKnown('10,-20.5,8:-1000', isFile)).toEqual({ shape: 'circle', x: 10, y: -20.5, r: 8, hu: -1000 });
    expect(parseKnown('0,0,5,-10,10:40', isFile)).toEqual({ shape: 'circle', x: 0, y: 0, r: 5, z: [-10, 10], hu: 40 });
    expect(parseKnown('air.nrrd:-1000', isFile)).toEqual({ shape: 'mask', input: 'air.nrrd', hu: -1000 });
    expect(parseOutline('ellipse:0,5,170,120', isFile)).toEqual({ shape: 'ellipse', cx: 0, cy: 5, a: 170, b: 120 });
    expect(parseOutline('body.nrrd', isFile)).toEqual({ shape: 'mask', input: 'body.nrrd' });
    expect(() => parseKnown('10,20:0', isFile)).toThrow(InputError);
    expect(() => parseKnown('10,20,5', isFile)).toThrow(/expected x,y,r:HU/);
    expect(() => parseOutline('circle:0,0,5', isFile)).toThrow(/expected ellipse:cx,cy,a,b/);
  });
});
