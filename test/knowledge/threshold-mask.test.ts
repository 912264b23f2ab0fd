// An outline from an image by a threshold (threshold -> mask -> outline) and the mask's boundary
// drawn as polygons. Outside checks: the area of a disk (pi r^2, textbook), the shoelace formula
// for a polygon's area (textbook), and the -500 HU level between air and soft tissue
// (REFERENCES.md [body-threshold], common practice).
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { gridOrigin, squareGrid, type Image2D } from '../../web/core/image';
import { polygonArea } from '../../web/core/knowledge';
import { maskContour } from '../../web/core/knowledge/mask-contour';
import { thresholdMask } from '../../web/core/knowledge/threshold-mask';

const MU = 0.02;
/** -500 HU. */
const LEVEL = 0.5 * MU;

/** An image with disks (cx, cy, r, mu) on air; later disks overwrite earlier ones. */
function disks(list: Array<[number, number, number, number]>, n = 128, pixel = 1): Image2D {
  const grid = squareGrid(n, pixel);
  const { x0, y0 } = gridOrigin(grid);
  const data = new Float32Array(n * n);
  for (let q = 0; q < data.length; q++) {
    const x = x0 + (q % n) * pixel, y = y0 + Math.floor(q / n) * pixel;
    for (const [cx, cy, r, v] of list) if (Math.hypot(x - cx, y - cy) <= r) data[q] = v;
  }
  return { grid, data, quantity: 'mu', muWater: MU };
}

const count = (m: Uint8Array) => m.reduce((s, v) => s + v, 0);

describe('threshold -> mask', () => {
  it('a water disk of radius 40 mm gives a mask of pi r^2 (within the pixel rim), with its air hole filled', () => {
    // A body of water with a lung-like hole of air (-1000 HU) in it: the outline goes round the body.
    const img = disks([[0, 0, 40, MU], [10, 5, 12, 0]]);
    const out = thresholdMask(img, LEVEL);
    expect(out.parts).toBe(1);
    // Area of a disk, pi r^2 (textbook); the staircase of a 1 mm grid differs by under 2 pi r pixels / 2.
    expect(Math.abs(out.pixels - Math.PI * 40 * 40)).toBeLessThan(Math.PI * 40);
    expect(out.mask[64 * 128 + 74]).toBe(1); // inside the hole at (10.5, 0.5) mm
  });

  it('keeps separate parts (arms beside a body) and drops specks under 1% of the largest', () => {
    const img = disks([[0, 0, 30, MU], [48, 0, 10, MU], [-50, 40, 1, MU]]);
    const out = thresholdMask(img, LEVEL);
    expect(out.parts).toBe(2);
    expect(out.dropped).toBeGreaterThan(0);
    expect(out.dropped).toBeLessThan(5);
  });

  it('refuses a level above everything, below the background, or an image with non-finite values, naming the field', () => {
    const img = disks([[0, 0, 30, MU]]);
    expect(() => thresholdMask(img, 2 * MU, 'outline threshold')).toThrow(/^outline threshold: no pixel of the image lies above the level; choose a lower one$/);
    expect(() => thresholdMask(img, -1, 'outline threshold')).toThrow(/outline threshold: every pixel of the image lies inside/);
    const bad = { ...img, data: img.data.map((v, q) => (q === 5 ? Number.NaN : v)) };
    expect(() => thresholdMask(bad, LEVEL)).toThrow(InputError);
    expect(() => thresholdMask(bad, LEVEL)).toThrow(/1 pixels that are not finite numbers/);
  });
});

describe("a mask's boundary as polygons", () => {
  it('the exact pixel-edge rings enclose exactly the mask pixels (shoelace formula); holes run the other way', () => {
    const img = disks([[0, 0, 30, MU], [5, 0, 8, 0]]);
    const mask = Uint8Array.from(img.data, (v) => (v > LEVEL ? 1 : 0));
    const rings = maskContour(mask, img.grid, 0);
    expect(rings.length).toBe(2);
    const areas = rings.map((r) => polygonArea(r)).sort((a, b) => a - b);
    expect(areas[0]).toBeLessThan(0); // the hole, clockwise
    expect(areas[1]).toBeGreaterThan(0); // the outer ring, counter-clockwise
    expect(areas[0] + areas[1]).toBeCloseTo(count(mask), 9);
  });

  it('diagonal neighbours are separate parts (4-connected), each its own ring', () => {
    const grid = squareGrid(4, 2);
    const mask = new Uint8Array(16);
    mask[5] = mask[10] = 1; // pixels (1, 1) and (2, 2) touch at a corner
    const rings = maskContour(mask, grid, 0);
    expect(rings.map((r) => polygonArea(r))).toEqual([4, 4]); // each 2 mm x 2 mm
  });

  it('simplified to half a pixel: far fewer points, the area within a few percent, on the pixel-edge grid in mm', () => {
    const img = disks([[0, 0, 40, MU]], 200, 0.5);
    const mask = Uint8Array.from(img.data, (v) => (v > LEVEL ? 1 : 0));
    const exact = maskContour(mask, img.grid, 0)[0];
    const simple = maskContour(mask, img.grid, 0.5)[0];
    expect(simple.length).toBeLessThan(exact.length / 2);
    expect(Math.abs(polygonArea(simple) / (Math.PI * 40 * 40) - 1)).toBeLessThan(0.02);
    for (const [x, y] of simple) expect(Math.hypot(x, y)).toBeLessThan(41);
  });
});
