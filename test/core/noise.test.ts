import { describe, expect, it } from 'vitest';
import { addPhotonNoise, poisson, seededRandom } from '../../web/core/simulate/noise';

describe('Poisson sampling', () => {
  // A Poisson variable has mean = variance = lambda (textbook definition). With n samples the
  // sample mean has standard error sqrt(lambda/n); we allow 5 standard errors.
  it.each([0.5, 4, 30, 1627.7, 1e5])('lambda = %f: mean and variance match', (lam) => {
    const rand = seededRandom(42);
    const n = 20000;
    let s = 0, s2 = 0;
    for (let i = 0; i < n; i++) {
      const k = poisson(lam, rand);
      expect(Number.isInteger(k) && k >= 0).toBe(true);
      s += k;
      s2 += k * k;
    }
    const mean = s / n, variance = s2 / n - mean * mean;
    expect(Math.abs(mean - lam)).toBeLessThan(5 * Math.sqrt(lam / n));
    // Variance of the sample variance ~ 2 lambda^2 / n + lambda / n for Poisson.
    expect(Math.abs(variance - lam)).toBeLessThan(5 * Math.sqrt((2 * lam * lam + lam) / n));
  });

  it('P(k = 0) for lambda = 2 is exp(-2) (Poisson pmf)', () => {
    const rand = seededRandom(3);
    let zeros = 0;
    const n = 50000;
    for (let i = 0; i < n; i++) if (poisson(2, rand) === 0) zeros++;
    expect(Math.abs(zeros / n - Math.exp(-2))).toBeLessThan(5 * Math.sqrt((Math.exp(-2) * (1 - Math.exp(-2))) / n));
  });

  it('line-integral noise: sigma_p ~ sqrt(exp(p) / I0) (REFERENCES.md [transmission-noise]: p = 4.118, I0 = 1e5 -> 0.0248)', () => {
    const p = new Float32Array(20000).fill(4.118);
    addPhotonNoise(p, 1e5, 9);
    let s = 0, s2 = 0;
    for (const v of p) {
      s += v;
      s2 += v * v;
    }
    const sd = Math.sqrt(s2 / p.length - (s / p.length) ** 2);
    expect(sd).toBeGreaterThan(0.0248 * 0.95);
    expect(sd).toBeLessThan(0.0248 * 1.05);
  });

  it('is reproducible with the same seed and differs with another', () => {
    const a = new Float32Array(100).fill(2), b = new Float32Array(100).fill(2), c = new Float32Array(100).fill(2);
    addPhotonNoise(a, 1000, 5);
    addPhotonNoise(b, 1000, 5);
    addPhotonNoise(c, 1000, 6);
    expect(a).toEqual(b);
    expect(a).not.toEqual(c);
  });

  it('counts readings with no photons', () => {
    const p = new Float32Array(1000).fill(30); // e^-30 * 100 photons: essentially none arrive
    const { zeroCounts } = addPhotonNoise(p, 100, 1);
    expect(zeroCounts).toBe(1000);
    expect(p[0]).toBeCloseTo(Math.log(100), 5);
  });
});
