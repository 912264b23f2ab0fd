// Page logic without a browser: window/level mapping and drags, display conversion and
// orientation, profiles, region statistics, view transforms, time left.
import { describe, expect, it } from 'vitest';
import { squareGrid, type ImageGrid } from '../../web/core/image';
import { difference, greyPixels, toDisplay } from '../../web/ui/logic/display';
import { pixelAt, regionStats, sampleProfile, valueAt } from '../../web/ui/logic/measure';
import { formatDuration, remainingMs } from '../../web/ui/logic/time-left';
import { toImage, toScreen, zoomAbout, pan, INITIAL_VIEW } from '../../web/ui/logic/view-transform';
import { autoWindow, dragWindow, greyOf, windowBounds, WINDOW_PRESETS } from '../../web/ui/logic/window-level';
import { geometrySummary, scanSummary } from '../../web/ui/logic/describe';
import { presetGeometry } from '../../web/core/geometry/presets';

describe('window and level', () => {
  it('maps L - W/2 to black and L + W/2 to white, linearly (REFERENCES.md [window-presets])', () => {
    const soft = WINDOW_PRESETS.find((p) => p.name === 'Soft tissue')!;
    expect(windowBounds(soft)).toEqual({ lower: -160, upper: 240 });
    expect(greyOf(-160, soft)).toBe(0);
    expect(greyOf(-1000, soft)).toBe(0);
    expect(greyOf(240, soft)).toBe(255);
    expect(greyOf(40, soft)).toBe(128); // 127.5 rounds up
    expect(greyOf(-60, soft)).toBe(64); // a quarter of the way: 63.75
    expect(greyOf(NaN, soft)).toBe(0);
  });

  it('presets are the teaching values of REFERENCES.md [window-presets]', () => {
    expect(WINDOW_PRESETS.map((p) => [p.name, p.width, p.level])).toEqual([
      ['Soft tissue', 400, 40], ['Lung', 1500, -600], ['Bone', 2000, 500],
    ]);
  });

  it('a drag right widens proportionally, a drag up raises the level, and the width stays positive', () => {
    const w = { width: 400, level: 40 };
    expect(dragWindow(w, 0, 0)).toEqual(w);
    expect(dragWindow(w, 150, 0).width).toBeCloseTo(400 * Math.E, 9);
    expect(dragWindow(w, 0, -30).level).toBeCloseTo(40 + 30 * 400 / 300, 9);
    expect(dragWindow(w, -1e5, 0).width).toBe(1);
    // Dragging back returns to the start.
    const there = dragWindow(w, 80, 20);
    const back = dragWindow(there, -80, 0);
    expect(back.width).toBeCloseTo(400, 9);
  });

  it('the automatic window spans the 1st to 99th percentile', () => {
    const v = Float32Array.from({ length: 1001 }, (_, i) => i); // 0..1000
    const w = autoWindow(v);
    expect(windowBounds(w).lower).toBe(10);
    expect(windowBounds(w).upper).toBe(990);
    expect(autoWindow(new Float32Array([NaN, NaN]))).toEqual({ width: 1, level: 0 });
  });
});

describe('display images', () => {
  const g: ImageGrid = { nx: 2, ny: 2, dx: 1, dy: 1, cx: 0, cy: 0 };
  it('convert mu to HU with the image mu_water (ICRP 129), or keep mu without one', () => {
    const hu = toDisplay({ grid: g, data: Float32Array.from([0, 0.02, 0.04, 0.01]), quantity: 'mu', muWater: 0.02 }, 'a');
    expect(hu.unit).toBe('HU');
    // Float32 storage of 0.02 etc. leaves rounding below 1e-3 HU.
    [-1000, 0, 1000, -500].forEach((v, k) => { expect(hu.values[k]).toBeCloseTo(v, 3); });
    expect(toDisplay({ grid: g, data: new Float32Array(4), quantity: 'mu' }, 'b').unit).toBe('1/mm');
  });

  it('draw the anterior (+y, last row) at the top', () => {
    const px = greyPixels(Float32Array.from([0, 0, 255, 255]), 2, 2, { width: 255, level: 127.5 });
    expect(Array.from(px.subarray(0, 4))).toEqual([255, 255, 255, 255]);
    expect(px[8]).toBe(0);
  });

  it('differences are taken on the first image grid, resampling the second', () => {
    const a = { label: 'a', grid: g, values: Float32Array.from([1, 2, 3, 4]), unit: 'HU' as const };
    expect(Array.from(difference(a, a, 'd').values)).toEqual([0, 0, 0, 0]);
    const fine: ImageGrid = { nx: 4, ny: 4, dx: 0.5, dy: 0.5, cx: 0, cy: 0 };
    const flat = { label: 'b', grid: fine, values: new Float32Array(16).fill(1), unit: 'HU' as const };
    expect(Array.from(difference(a, flat, 'd').values)).toEqual([0, 1, 2, 3]);
  });
});

describe('profiles and regions', () => {
  // A ramp along x: value = x (mm) on a 5 x 3 grid of 2 mm pixels centred at (0, 0).
  const g: ImageGrid = { nx: 5, ny: 3, dx: 2, dy: 2, cx: 0, cy: 0 };
  const ramp = Float32Array.from({ length: 15 }, (_, k) => (k % 5) * 2 - 4);

  it('bilinear sampling reproduces a linear ramp exactly, and is NaN outside the pixel centres', () => {
    expect(valueAt(ramp, g, { x: 1.3, y: 0.7 })).toBeCloseTo(1.3, 6);
    expect(valueAt(ramp, g, { x: 4, y: 2 })).toBeCloseTo(4, 6);
    expect(valueAt(ramp, g, { x: 4.01, y: 0 })).toBeNaN();
    expect(pixelAt(ramp, g, { x: 1.2, y: 0 })).toBe(2);
  });

  it('a profile is sampled every half pixel with both ends included', () => {
    const p = sampleProfile(ramp, g, { x: -4, y: 0 }, { x: 4, y: 0 });
    expect(p.distance.length).toBe(9);
    expect(p.distance.at(-1)).toBe(8);
    p.values.forEach((v, k) => { expect(v).toBeCloseTo(-4 + p.distance[k], 6); });
  });

  it('region statistics match a direct computation over the pixels inside the circle', () => {
    const r = regionStats(ramp, g, { x: 0, y: 0 }, 2.1);
    // Centres within 2.1 mm of (0,0): (0,0), (+-2,0), (0,+-2): values 0, -2, 2, 0, 0.
    expect(r.pixels).toBe(5);
    expect(r.mean).toBeCloseTo(0, 9);
    expect(r.sd).toBeCloseTo(Math.sqrt(8 / 4), 9);
    expect(regionStats(ramp, g, { x: 100, y: 0 }, 1).pixels).toBe(0);
  });

  it('region SD of a large uniform-plus-offset image is stable (Welford)', () => {
    const big = squareGrid(64, 1);
    const v = Float32Array.from({ length: 64 * 64 }, (_, k) => 1e6 + (k % 2));
    const r = regionStats(v, big, { x: 0, y: 0 }, 100);
    expect(r.pixels).toBe(4096);
    expect(r.sd).toBeCloseTo(Math.sqrt((4096 * 0.25) / 4095), 6);
  });
});

describe('view transform', () => {
  const g = squareGrid(100, 2); // 200 mm
  it('screen and image coordinates invert each other, with +y up', () => {
    const view = { zoom: 2, centre: { x: 10, y: -5 } };
    const q = toScreen({ x: 30, y: 20 }, g, 400, 300, view);
    expect(q.y).toBeLessThan(150);
    const p = toImage(q, g, 400, 300, view);
    expect(p.x).toBeCloseTo(30, 9);
    expect(p.y).toBeCloseTo(20, 9);
  });

  it('zooming keeps the point under the cursor still; panning moves by the drag', () => {
    const q = { x: 123, y: 77 };
    const before = toImage(q, g, 400, 300, INITIAL_VIEW);
    const z = zoomAbout(INITIAL_VIEW, 3, q, g, 400, 300);
    const after = toImage(q, g, 400, 300, z);
    expect(after.x).toBeCloseTo(before.x, 9);
    expect(after.y).toBeCloseTo(before.y, 9);
    const moved = pan(INITIAL_VIEW, 30, 0, g, 400, 300);
    expect(toScreen(INITIAL_VIEW.centre, g, 400, 300, moved).x).toBeCloseTo(230, 9);
  });
});

describe('time left', () => {
  it('is elapsed x (1 - f) / f once enough is done', () => {
    expect(remainingMs(0.01, 5000)).toBeUndefined();
    expect(remainingMs(0.5, 300)).toBeUndefined();
    expect(remainingMs(0.25, 3000)).toBe(9000);
    expect(remainingMs(1, 3000)).toBe(0);
  });

  it('reads in plain words', () => {
    expect(formatDuration(400)).toBe('under a second');
    expect(formatDuration(44_600)).toBe('about 45 s');
    expect(formatDuration(130_000)).toBe('about 2 min 10 s');
    expect(formatDuration(120_000)).toBe('about 2 min');
  });
});

describe('descriptions', () => {
  it('summarize a geometry in plain words', () => {
    expect(geometrySummary(presetGeometry('demo')!)).toBe('Fan beam, flat detector 1100 × 1 mm, 720 views over 360°, source 600 mm / detector 1000 mm from the source');
  });

  it('name the reduction a scan was imported with, and from what', () => {
    const g = presetGeometry('demo')!;
    expect(scanSummary({ geometry: g })).toBe(geometrySummary(g));
    expect(scanSummary({ geometry: g, reduction: { applied: { bin: 2, viewStep: 3 }, from: { channels: 2200, rows: 1, views: 2160 } } }))
      .toBe(`${geometrySummary(g)}; imported with 2 x 2 detector binning, every 3rd view from 2200 × 1 cells, 2160 views`);
  });
});

describe('convergence histories', () => {
  it('take every numeric series of report.convergence, arrays or typed arrays', async () => {
    const { convergenceHistories } = await import('../../web/ui/logic/convergence');
    expect(convergenceHistories({ convergence: { residual: [3, 2, 1], tv: Float32Array.from([5, 4]), note: 'x', one: [1], mixed: [1, 'a'] } })).toEqual([
      { label: 'residual', values: [3, 2, 1] },
      { label: 'tv', values: [5, 4] },
    ]);
    expect(convergenceHistories({ timings: { a: 1 } })).toEqual([]);
    expect(convergenceHistories({ convergence: [1, 2] })).toEqual([]);
  });
});
