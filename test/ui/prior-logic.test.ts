// The network-prior page's pure logic: where flagged rays lie (runs of views, channel spans),
// the residual colour scale, and plain-words descriptions of a network's description.
import { describe, expect, it } from 'vitest';
import { validateModelInfo } from '../../web/core/model/description';
import { inputSourceSummary, modelGridSummary, normalizationSummary } from '../../web/ui/logic/describe-model';
import { describeRun, disagreeingRuns, divergingRgb, residualHalfRange } from '../../web/ui/logic/disagreement';

/** Flags for `views` x `nCh` rays from a list of [view, channel] pairs. */
function flags(views: number, nCh: number, set: Array<[number, number]>): Uint8Array {
  const f = new Uint8Array(views * nCh);
  for (const [v, k] of set) f[v * nCh + k] = 1;
  return f;
}

describe('disagreeing runs', () => {
  it('groups neighbouring views, bridges short gaps, and sorts by flagged rays', () => {
    const f = flags(20, 10, [[1, 4], [2, 5], [4, 6], [12, 0], [12, 1], [12, 2], [13, 9], [19, 3]]);
    // Views 1, 2, 4 (gap of one view) form a run; 12-13 another; 19 alone.
    expect(disagreeingRuns(f, 10)).toEqual([
      { first: 12, last: 13, rays: 4, firstChannel: 0, lastChannel: 9 },
      { first: 1, last: 4, rays: 3, firstChannel: 4, lastChannel: 6 },
      { first: 19, last: 19, rays: 1, firstChannel: 3, lastChannel: 3 },
    ]);
    // Without bridging, view 4 stands alone.
    expect(disagreeingRuns(f, 10, 0).map((r) => [r.first, r.last])).toEqual([[12, 13], [1, 2], [4, 4], [19, 19]]);
    expect(disagreeingRuns(new Uint8Array(50), 10)).toEqual([]);
  });

  it('describes a run with its angles when the scan has them', () => {
    const run = { first: 34, last: 80, rays: 1234, firstChannel: 12, lastChannel: 58 };
    const angles = Array.from({ length: 100 }, (_, v) => v * 0.5);
    expect(describeRun(run, angles)).toBe('views 34–80 (17°–40°), channels 12–58: 1234 rays');
    expect(describeRun({ first: 3, last: 3, rays: 1, firstChannel: 7, lastChannel: 7 })).toBe('view 3, channel 7: 1 ray');
  });
});

describe('residual colours', () => {
  it('the scale is the flagging threshold or the 99.5th percentile of |residual|, whichever is larger', () => {
    const r = Float32Array.from({ length: 1000 }, (_, i) => (i % 2 ? 1 : -1) * (i / 1000));
    // |r| = i / 1000: its 99.5th percentile is 0.995.
    expect(residualHalfRange(r, 0.5)).toBeCloseTo(0.995, 6);
    expect(residualHalfRange(r, 2)).toBe(2);
    expect(residualHalfRange(new Float32Array(10), 0)).toBe(1);
    expect(residualHalfRange(Float32Array.from([NaN, NaN]), 0.1)).toBe(0.1);
  });

  it('maps negative to blue, zero to near-white, positive to red, NaN to grey (ColorBrewer RdBu ends)', () => {
    expect(divergingRgb(0, 1)).toEqual([247, 247, 247]);
    expect(divergingRgb(-5, 1)).toEqual([33, 102, 172]);
    expect(divergingRgb(1, 1)).toEqual([178, 24, 43]);
    expect(divergingRgb(0.5, 1)).toEqual([213, 136, 145]);
    expect(divergingRgb(NaN, 1)).toEqual([128, 128, 128]);
  });
});

describe('network descriptions in plain words', () => {
  const info = (input: Record<string, unknown>, from = { method: 'fbp', extend: 'water' }) =>
    validateModelInfo({ format: 'rimfill-model/1', input: { name: 'image', quantity: 'mu', from, ...input }, output: { name: 'prior', quantity: 'hu', scale: 0.001 } });

  it('grid, normalization and input source', () => {
    expect(modelGridSummary(info({}).input)).toBe('the reconstruction grid');
    expect(modelGridSummary(info({ size: 256 }).input)).toBe("256 × 256 pixels over the reconstruction's field");
    expect(modelGridSummary(info({ size: 256, pixel: 1.5 }).input)).toBe('256 × 256 pixels of 1.5 mm');
    expect(normalizationSummary(info({ scale: 50, offset: -1 }).input)).toBe('µ (1/mm) × 50 − 1');
    expect(normalizationSummary(info({}).input)).toBe('µ (1/mm) unchanged');
    expect(normalizationSummary(info({}).output)).toBe('HU × 0.001');
    expect(inputSourceSummary(info({}))).toBe('FBP with truncation correction: water cylinder fit');
    expect(inputSourceSummary(info({}, { method: 'fbp', extend: 'none' }))).toBe('FBP without truncation correction');
  });
});
