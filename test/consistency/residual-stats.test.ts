// Residual statistics on synthetic residuals whose figures are known in closed form.
import { describe, expect, it } from 'vitest';
import { channelsSpanning } from '../../web/core/consistency/consistency-report';
import { averageChannels, residualStats } from '../../web/core/consistency/residual-stats';
import { presetGeometry } from '../../web/core/geometry/presets';

describe('residual statistics', () => {
  const nViews = 4, nCh = 50;
  const measured = Float32Array.from({ length: nViews * nCh }, (_, i) => 1 + (i % 7));

  it('a residual of 10% of the data everywhere has relative RMS 0.1 and mean 0.1 * mean(p)', () => {
    const r = measured.map((p) => 0.1 * p);
    const { summary, profiles } = residualStats(r, measured, nViews, nCh, 1, 0);
    expect(summary.relativeRms).toBeCloseTo(0.1, 6);
    expect(summary.meanResidual).toBeCloseTo(0.1 * (measured.reduce((a, b) => a + b) / measured.length), 6);
    for (const v of profiles.viewRelative) expect(v).toBeCloseTo(0.1, 6);
  });

  it('flags exactly a band wider than the averaging window, none of the noise', () => {
    // Alternating +-0.01 "noise" everywhere, a 12-channel band of 1.0 in view 2.
    const r = Float32Array.from({ length: nViews * nCh }, (_, i) => (i % 2 ? 0.01 : -0.01));
    for (let k = 20; k < 32; k++) r[2 * nCh + k] = 1;
    const { summary, profiles } = residualStats(r, measured, nViews, nCh, 3, 0.05);
    expect(profiles.viewFlagged[2]).toBeGreaterThanOrEqual(12);
    expect(profiles.viewFlagged[2]).toBeLessThanOrEqual(14); // the window reaches one channel past each side
    expect(summary.flaggedViews).toBe(1);
    expect(summary.averagedChannels).toBe(3);
    // The averaged noise is +-0.01/3: its MAD sigma is small, so the 0.05 floor sets the threshold.
    expect(summary.threshold).toBe(0.05);
  });

  it('skips NaN residuals in the average, the figures and the flags', () => {
    const r = new Float32Array(nViews * nCh).fill(0.2);
    r[10] = NaN;
    const avg = averageChannels(r, nViews, nCh, 5);
    expect(Number.isNaN(avg[10])).toBe(true);
    expect(avg[9]).toBeCloseTo(0.2, 6);
    const { summary, profiles } = residualStats(r, measured, nViews, nCh, 5, 0);
    expect(summary.rays).toBe(nViews * nCh - 1);
    expect(summary.excludedRays).toBe(1);
    expect(profiles.flagged[10]).toBe(0);
  });

  it('the flagging window spans the width at the isocentre: 5 mm on the demo detector (magnification 1000/600, 1 mm pitch) is 9 channels', () => {
    expect(channelsSpanning(presetGeometry('demo')!, 5)).toBe(9);
    expect(channelsSpanning(presetGeometry('demo-parallel')!, 5)).toBe(11);
    expect(channelsSpanning(presetGeometry('demo')!, 0)).toBe(1);
  });
});
