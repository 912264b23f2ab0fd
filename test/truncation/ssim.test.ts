import { describe, expect, it } from 'vitest';
import { ssim } from '../../web/core/metrics';
import { fixtureBytes, fixtureF32, fixtureJson } from '../helpers/fixtures';

// SSIM of Z. Wang, A. C. Bovik, H. R. Sheikh, E. P. Simoncelli, IEEE TIP 13(4):600-612, 2004,
// checked against an independent general-purpose implementation: scikit-image's
// structural_similarity with the paper's settings (REFERENCES.md [ssim-2004]: gaussian_weights=True,
// sigma=1.5, use_sample_covariance=False). The images and skimage's figures are committed
// fixtures made by scripts/reference/metric_values.py (test/fixtures/MANIFEST.json).

interface SsimCase { case: string; width: number; height: number; dataRange: number; mssim: number; masked: number }
const cases = fixtureJson<SsimCase[]>('metrics/ssim/expected.json');
const a = fixtureF32('metrics/ssim/a.f32');
const mask = fixtureBytes('metrics/ssim/mask.u8');

describe('SSIM', () => {
  it('is 1 for an image against itself', () => {
    const { width, height } = cases[0];
    expect(ssim(a, a, width, height, 200)).toBeCloseTo(1, 12);
  });

  it.each(cases.map((c) => [c.case, c] as const))('agrees with scikit-image to 1e-3 (%s)', (_, c) => {
    const b = fixtureF32(`metrics/ssim/b-${c.case}.f32`);
    expect(a.length).toBe(c.width * c.height);
    expect(c.mssim).toBeLessThan(0.99);
    expect(Math.abs(ssim(a, b, c.width, c.height, c.dataRange) - c.mssim)).toBeLessThan(1e-3);
    expect(Math.abs(ssim(a, b, c.width, c.height, c.dataRange, mask) - c.masked)).toBeLessThan(1e-3);
  });
});
