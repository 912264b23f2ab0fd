// Comparing an image that leaves pixels undetermined (a DBP result: their values are a fill):
// those pixels enter no figure. Known answers by hand on a 4 x 4 grid, HU = 1000 (mu - mu_water)
// / mu_water (ICRP 129, REFERENCES.md [hu-definition]); RMSE = sqrt(mean of squared differences).
import { describe, expect, it } from 'vitest';
import { compareImages } from '../../web/core/compare';
import { InputError } from '../../web/core/errors';
import { squareGrid } from '../../web/core/image';

const mw = 0.02;
const grid = squareGrid(4, 1);
/** The reference: water (0 HU) everywhere. */
const reference = { grid, data: new Float32Array(16).fill(mw), quantity: 'mu' as const, muWater: mw };
/** The image: the left column (x = -1.5 mm) filled with air (-1000 HU) and not determined; one pixel at +100 HU; water elsewhere. */
const exclude = Uint8Array.from({ length: 16 }, (_, q) => (q % 4 === 0 ? 1 : 0));
const data = Float32Array.from({ length: 16 }, (_, q) => (q % 4 === 0 ? 0 : q === 10 ? mw * 1.1 : mw));
const image = { grid, data, quantity: 'mu' as const, muWater: mw };

describe('comparison over the determined pixels', () => {
  it('the RMSE over the 12 determined pixels is 100 / sqrt(12) HU; with the fill it would be sqrt((4 x 1000^2 + 100^2) / 16)', () => {
    const kept = compareImages(image, reference, undefined, exclude);
    expect(kept.regions.image!.pixels).toBe(12);
    expect(kept.regions.image!.rmse).toBeCloseTo(100 / Math.sqrt(12), 2);
    expect(kept.notes).toContain('4 pixels the image does not determine are left out of every figure');
    const all = compareImages(image, reference);
    expect(all.regions.image!.rmse).toBeCloseTo(Math.sqrt((4 * 1000 ** 2 + 100 ** 2) / 16), 1);
    expect(all.notes.some((n) => /left out/.test(n))).toBe(false);
  });

  it('inside and outside the field follow: a region wholly undetermined has no figure', () => {
    // Field of view radius 1.6 mm: pixel centres at (+-0.5, +-0.5) and (+-0.5, +-1.5), (+-1.5, +-0.5) lie inside.
    const onlyOutside = Uint8Array.from({ length: 16 }, (_, q) => (Math.hypot((q % 4) - 1.5, Math.floor(q / 4) - 1.5) > 1.6 ? 1 : 0));
    const c = compareImages(image, reference, 1.6, onlyOutside);
    expect(c.regions.outsideFov).toBeNull();
    expect(c.regions.insideFov!.pixels).toBe(12);
  });

  it('a mask that does not fit the grid is refused by name', () => {
    expect(() => compareImages(image, reference, undefined, new Uint8Array(15))).toThrow(InputError);
    expect(() => compareImages(image, reference, undefined, new Uint8Array(15))).toThrow(/mask of undetermined pixels has 15 pixels, expected 16/);
  });
});
