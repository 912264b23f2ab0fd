// The page's picture of what a DBP result does not determine: the overlay's pixels (laid out as
// the image's own, anterior at the top), the read-outs that give no value there, the counts in
// the report, and an outside check on a run whose undetermined part follows from the geometry
// alone: with a known region made of two small disks, the chords through their common centre
// (Kudo, Courdurier, Noo & Defrise 2008, REFERENCES.md [kudo2008]) that miss both disks leave
// their pixels undetermined, and so does everything outside the measured field of view.
import { describe, expect, it } from 'vitest';
import { countUndetermined, undeterminedWords } from '../../web/core/dbp/undetermined-count';
import type { Geometry } from '../../web/core/geometry/types';
import { validateGeometry } from '../../web/core/geometry/validate';
import { gridOrigin, type Image2D } from '../../web/core/image';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { buildReport } from '../../web/ui/export/report';
import { undeterminedText } from '../../web/ui/export/undetermined';
import { difference, greyPixels, toDisplay } from '../../web/ui/logic/display';
import { regionStats, sampleProfile, valueAt } from '../../web/ui/logic/measure';
import { overlayPixels, undeterminedAt } from '../../web/ui/logic/undetermined-overlay';
import { localWorkspace } from '../helpers/engine';
import { smallPhantom } from '../helpers/hilbert-phantom';

/** Alpha of the overlay at image pixel (i, j) (j counts up in y; the overlay's rows run down from +y). */
const alphaAt = (rgba: Uint8ClampedArray, nx: number, ny: number, i: number, j: number) => rgba[((ny - 1 - j) * nx + i) * 4 + 3];

describe('overlay pixels', () => {
  it('tint exactly the marked pixels, where greyPixels puts the same pixel of the image', () => {
    // 3 x 2, x fastest: the marked pixel is (i 2, j 1), the top right (largest x, largest y).
    const nx = 3, ny = 2;
    const mask = Uint8Array.from([0, 0, 0, 0, 0, 1]);
    const rgba = overlayPixels(mask, nx, ny);
    expect(rgba.length).toBe(nx * ny * 4);
    // Top row, last column in the overlay; the image's value 5 lands at the same place.
    const grey = greyPixels(Float32Array.from([0, 0, 0, 0, 0, 1]), nx, ny, { width: 1, level: 0.5 });
    for (let k = 0; k < nx * ny; k++) expect(rgba[4 * k + 3] > 0).toBe(grey[4 * k] === 255);
    expect(rgba[4 * 2 + 3]).toBeGreaterThan(0);
    // Tinted, never grey: a window cannot make an image pixel look like the overlay.
    expect(rgba[4 * 2]).not.toBe(rgba[4 * 2 + 1]);
  });

  it('the cursor finds the marked pixel nearest it; off the grid nothing is marked', () => {
    const g = { nx: 3, ny: 2, dx: 2, dy: 1, cx: 0, cy: 0 };
    const mask = Uint8Array.from([0, 0, 0, 0, 0, 1]);
    expect(undeterminedAt(mask, g, { x: 2, y: 0.5 })).toBe(true);
    expect(undeterminedAt(mask, g, { x: 1.1, y: 0.4 })).toBe(true);
    expect(undeterminedAt(mask, g, { x: 0.9, y: 0.5 })).toBe(false);
    expect(undeterminedAt(mask, g, { x: 4, y: 0.5 })).toBe(false);
  });
});

describe('values over undetermined pixels', () => {
  const g = { nx: 4, ny: 4, dx: 1, dy: 1, cx: 0, cy: 0 };
  // A ramp in x; the left column (x = -1.5 mm) is not determined.
  const values = Float32Array.from({ length: 16 }, (_, q) => q % 4);
  const mask = Uint8Array.from({ length: 16 }, (_, q) => (q % 4 === 0 ? 1 : 0));

  it('region figures leave them out and count them; a circle wholly over them has no figure', () => {
    const all = regionStats(values, g, { x: 0, y: 0 }, 10, mask);
    expect(all).toMatchObject({ pixels: 12, undetermined: 4 });
    expect(all.mean).toBeCloseTo(2, 12); // columns 1, 2, 3
    // Centred between the left column's two middle pixels: those two (0.5 mm away), none of the next column (1.12 mm).
    const none = regionStats(values, g, { x: -1.5, y: 0 }, 1.05, mask);
    expect(none.pixels).toBe(0);
    expect(none.undetermined).toBe(2);
    expect(none.mean).toBeNaN();
    expect(regionStats(values, g, { x: 0, y: 0 }, 10).undetermined).toBe(0);
  });

  it('profiles leave a gap next to them', () => {
    expect(valueAt(values, g, { x: -1, y: 0 }, mask)).toBeNaN();
    expect(valueAt(values, g, { x: 0, y: 0 }, mask)).toBeCloseTo(1.5, 12);
    // Samples at x = -1.5, -1, ..., 1.5: the first two take the left column; from -0.5 on they do not.
    const p = sampleProfile(values, g, { x: -1.5, y: 0 }, { x: 1.5, y: 0 }, 0.5, mask);
    expect(p.values.slice(0, 2).every(Number.isNaN)).toBe(true);
    expect(p.values.slice(2)).toEqual([1, 1.5, 2, 2.5, 3]);
  });

  it('a difference is not determined where either image is not (same grid)', () => {
    const img: Image2D = { grid: g, data: values, quantity: 'mu' };
    const other = Uint8Array.from({ length: 16 }, (_, q) => (q === 15 ? 1 : 0));
    const d = difference(toDisplay(img, 'a', mask), toDisplay(img, 'b', other), 'a - b');
    expect(Array.from(d.undetermined!)).toEqual(Array.from(mask, (v, q) => v | other[q]));
    expect(difference(toDisplay(img, 'a'), toDisplay(img, 'b'), 'a - b').undetermined).toBeUndefined();
  });
});

describe('the undetermined share', () => {
  it('counts pixel centres inside the field of view by hand on a 4 x 4 grid', () => {
    // Centres at +-0.5 and +-1.5 mm: within 1 mm of the isocentre only the middle four (0.71 mm).
    const g = { nx: 4, ny: 4, dx: 1, dy: 1, cx: 0, cy: 0 };
    const outsideFov = Uint8Array.from({ length: 16 }, (_, q) => (Math.abs((q % 4) - 1.5) < 1 && Math.abs(Math.floor(q / 4) - 1.5) < 1 ? 0 : 1));
    const c = countUndetermined(outsideFov, g, 1);
    expect(c).toEqual({ pixels: 12, total: 16, insideFov: 0, fovPixels: 4 });
    expect(undeterminedWords(c)).toBe('75.0% of the image (0.0% of the field of view)');
    const img: Image2D = { grid: g, data: new Float32Array(16), quantity: 'mu', fovRadius: 1 };
    expect(undeterminedText(toDisplay(img, 'x', outsideFov))).toMatch(/^75\.0% of the image \(0\.0% of the field of view\) not determined .*12 pixels/);
    expect(undeterminedText(toDisplay(img, 'x'))).toBeUndefined();
  });

  it('the report states it and gives no region figure over undetermined pixels', () => {
    const html = buildReport({
      title: 't', scanName: 's', scanSummary: 'fan', referenceLabel: 'nothing', window: { width: 400, level: 40 }, unit: 'HU', createdAt: new Date(0), undeterminedDrawn: true,
      images: [{ label: 'DBP', colour: '#123456', png: 'data:image/png;base64,AAAA', warnings: [], undetermined: '75.0% of the image (0.0% of the field of view) not determined', region: { mean: NaN, sd: NaN, pixels: 0, undetermined: 9 } }],
    });
    expect(html).toMatch(/<h2>Not determined<\/h2><ul><li>.*DBP: 75\.0% of the image/);
    expect(html).toMatch(/drawn with violet stripes/);
    expect(html).toMatch(/<td colspan="2">not determined<\/td><td>0 \(9 not determined, left out\)<\/td>/);
  });
});

describe('the overlay of a DBP run against the geometry', () => {
  // The scan of the DBP tests: a 132 mm wide body, a flat-detector fan whose field of view
  // (R sin(atan(u_max / D)), common practice) has a radius of about 38 mm.
  const geometry: Geometry = validateGeometry({ kind: 'fan', detector: { shape: 'flat', channels: 276, rows: 1, pitch: [0.5, 0.5], offset: [0, 0] }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 1, count: 360 } });
  const fov = 500 * Math.sin(Math.atan(69 / 900));
  const grid = { nx: 96, ny: 96, dx: 1.5, dy: 1.5, cx: 0, cy: 0 };
  /** Two disks of radius 4 mm at (-15, 20) and (-15, -10): the chords pass through their centroid (-15, 5). */
  const disks = [{ x: -15, y: 20 }, { x: -15, y: -10 }];
  const centre = { x: -15, y: 5 };

  function twoDisks(): Image2D {
    const { x0, y0 } = gridOrigin(grid);
    const data = new Float32Array(grid.nx * grid.ny);
    for (let q = 0; q < data.length; q++) {
      const x = x0 + (q % grid.nx) * grid.dx, y = y0 + Math.floor(q / grid.nx) * grid.dy;
      if (disks.some((d) => Math.hypot(x - d.x, y - d.y) <= 4)) data[q] = 1;
    }
    return { grid, data, quantity: 'mu' };
  }

  it('tints outside the field, and inside it the pixels whose chord misses both disks; not those whose chord crosses them', async () => {
    const phantom = smallPhantom();
    const scan = { geometry, data: analyticSinogram(phantom, geometry, 2), muWater: phantom.muWater };
    const recipe = validateRecipe({ method: 'dbp', grid: { size: 96, pixel: 1.5 }, knowledge: { known: [{ shape: 'mask', input: 'two.nrrd', hu: 0 }] } });
    const r = await runRecipe(await localWorkspace(1), scan, recipe, {}, { masks: { 'two.nrrd': twoDisks() } });
    expect(r.image.grid).toEqual(grid);
    const rgba = overlayPixels(r.undetermined!, grid.nx, grid.ny);
    const { x0, y0 } = gridOrigin(grid);
    const seen = { outside: 0, crossing: 0, missing: 0 };
    for (let j = 0; j < grid.ny; j++) {
      for (let i = 0; i < grid.nx; i++) {
        const x = x0 + i * grid.dx, y = y0 + j * grid.dy;
        const rho = Math.hypot(x, y);
        const tinted = alphaAt(rgba, grid.nx, grid.ny, i, j) > 0;
        if (rho > fov + 1.5) { expect(tinted).toBe(true); seen.outside++; continue; }
        if (rho > fov - 1.5 || Math.hypot(x - centre.x, y - centre.y) < 3) continue; // the field's edge, the chords' common point
        // The line through the centre and this pixel, against the vertical (the direction of both disks from the centre):
        // it crosses a disk of radius 4 at 15 mm when sin(angle) < 4 / 15 (15.5 degrees).
        const angle = (Math.atan2(Math.abs(x - centre.x), Math.abs(y - centre.y)) * 180) / Math.PI;
        if (angle < 9) { expect(tinted).toBe(false); seen.crossing++; }
        else if (angle > 22) { expect(tinted).toBe(true); seen.missing++; }
      }
    }
    // Each kind of pixel was met in numbers (the bounds only guard against an empty check).
    expect(seen.outside).toBeGreaterThan(1000);
    expect(seen.crossing).toBeGreaterThan(100);
    expect(seen.missing).toBeGreaterThan(1000);
  });
});
