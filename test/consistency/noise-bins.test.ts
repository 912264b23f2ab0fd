// Flagging against the spread of rays with similar measured values: photon noise on a line
// integral p has a standard deviation of about sqrt(e^p / I0) (Poisson counts with mean
// I0 e^-p, first-order error propagation of p = -ln(N / I0): common practice), so a consistent
// image of a noisy scan must not be flagged in its thickest views, and a small disagreement
// where the data are quiet must still be found.
import { describe, expect, it } from 'vitest';
import { noiseBins, MAX_NOISE_BINS } from '../../web/core/consistency/noise-bins';
import { residualStats } from '../../web/core/consistency/residual-stats';
import { seededRandom } from '../../web/core/simulate/noise';

const nViews = 20, nCh = 500;
const I0 = 1e5;
// Measured values from 0 to 8 across the detector (thin edge to thick middle and back).
const measured = Float32Array.from({ length: nViews * nCh }, (_, i) => 8 * Math.sin((Math.PI * ((i % nCh) + 0.5)) / nCh));
const sigmaAt = (p: number) => Math.sqrt(Math.exp(p) / I0);

function gaussianResidual(seed: number): Float32Array {
  const rand = seededRandom(seed);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
  return Float32Array.from(measured, (p) => sigmaAt(p) * gauss());
}

describe('noise-aware flagging', () => {
  it('the spread in each bin follows the photon-noise model sqrt(e^p / I0)', () => {
    const { bins, binOf } = noiseBins(gaussianResidual(3), measured);
    expect(bins.length).toBe(MAX_NOISE_BINS);
    expect(bins.reduce((a, b) => a + b.rays, 0)).toBe(measured.length);
    expect(binOf.every((b) => b >= 0)).toBe(true);
    let lower = 0;
    for (const b of bins) {
      // The bin spans measured values (lower, upTo]; its spread lies between the model's there
      // (MAD of a mixture), within the estimate's own scatter (about 5% for 600 rays).
      expect(b.sigma).toBeGreaterThan(0.85 * sigmaAt(lower));
      expect(b.sigma).toBeLessThan(1.15 * sigmaAt(b.upTo));
      lower = b.upTo;
    }
    expect(bins[bins.length - 1].sigma).toBeGreaterThan(20 * bins[0].sigma);
  });

  it('a consistent image of a noisy scan is not flagged in its noisiest rays', () => {
    const { summary } = residualStats(gaussianResidual(5), measured, nViews, nCh, 1, 0);
    // One global spread would flag the rays where p > 2 ln(5 sigma_global sqrt(I0)): hundreds here.
    const global = 5 * summary.robustSigma;
    const overGlobal = Array.from(gaussianResidual(5)).filter((r) => Math.abs(r) > global).length;
    expect(overGlobal).toBeGreaterThan(300);
    expect(summary.flaggedFraction).toBeLessThan(0.002);
    expect(summary.thresholdMax).toBeGreaterThan(20 * summary.threshold);
  });

  it('a disagreement where the data are quiet is still found', () => {
    const r = gaussianResidual(7);
    // A band of 0.05 over 30 channels near the thin edge (p < 0.8, noise sigma < 0.005) in view 4.
    for (let k = 10; k < 40; k++) r[4 * nCh + k] += 0.05;
    const { summary, profiles } = residualStats(r, measured, nViews, nCh, 1, 0);
    let found = 0;
    for (let k = 10; k < 40; k++) found += profiles.flagged[4 * nCh + k];
    expect(found).toBeGreaterThanOrEqual(28);
    // The global spread alone would have missed it.
    expect(5 * summary.robustSigma).toBeGreaterThan(0.06);
  });
});
