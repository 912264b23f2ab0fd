// Overlap of two grids: the area (volume) of the intersection of their extents over the image's
// (elementary geometry; a grid reaches half a pixel beyond its outer pixel centres).
import { describe, expect, it } from 'vitest';
import { checkOverlap, overlapFraction } from '../../web/core/overlap';
import { compareVolumes } from '../../web/core/compare-volume';
import { InputError } from '../../web/core/errors';

const grid = { nx: 10, ny: 10, dx: 1, dy: 1, cx: 0, cy: 0 };

describe('grid overlap', () => {
  it('is the shared area over the image area', () => {
    expect(overlapFraction(grid, grid)).toBe(1);
    expect(overlapFraction(grid, { ...grid, cx: 3 })).toBeCloseTo(0.7, 12);
    expect(overlapFraction(grid, { ...grid, cx: 3, cy: -5 })).toBeCloseTo(0.7 * 0.5, 12);
    // A reference four times as large covers all of the image; the image covers a quarter of it.
    const big = { ...grid, dx: 2, dy: 2 };
    expect(overlapFraction(grid, big)).toBe(1);
    expect(overlapFraction(big, grid)).toBeCloseTo(0.25, 12);
    expect(overlapFraction(grid, { ...grid, cx: 10 })).toBe(0); // edges touch
  });

  it('counts z for volumes', () => {
    const v = { ...grid, nz: 8, dz: 2, cz: 0 };
    expect(overlapFraction(v, { ...v, cz: 4 })).toBeCloseTo(0.75, 12);
  });

  it('notes a cover under 90% and refuses none', () => {
    expect(checkOverlap(grid, { ...grid, cx: 0.5 }).note).toBeUndefined();
    expect(checkOverlap(grid, { ...grid, cx: 2 }).note).toMatch(/covers only 80\.0% of the image's area/);
    expect(() => checkOverlap(grid, { ...grid, cy: 12 })).toThrow(InputError);
  });

  it('a volume comparison refuses a reference elsewhere', () => {
    const g = { ...grid, nz: 4, dz: 1, cz: 0 };
    const vol = { grid: g, data: new Float32Array(400), quantity: 'mu' as const, muWater: 0.02 };
    expect(() => compareVolumes(vol, { ...vol, grid: { ...g, cz: 50 } })).toThrow(/reference: it does not overlap the volume .* z -2\.0 to 2\.0 mm; reference .* z 48\.0 to 52\.0 mm/);
    expect(compareVolumes(vol, { ...vol, grid: { ...g, cz: 2 } }).notes.join(' ')).toMatch(/covers only 50\.0% of the volume;/);
  });
});
