// Binning, view steps and row ranges (web/core/reduction.ts). The outside check: exact cone-beam
// projections of a phantom (REFERENCES.md [ellipsoid-chord], analytic-cone.ts) on the fine detector, binned
// 2 x 2, must equal the exact projections on the reduced detector with 2 x 2 rays per cell
// (their rays pass through the fine cells' centres), so the reduced geometry (pitch, offsets,
// cropped rows, kept angles) is the one the values were measured with.
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { validateGeometry } from '../../web/core/geometry/validate';
import { viewCount } from '../../web/core/geometry/types';
import { sheppLogan3d } from '../../web/core/phantoms/shepp-logan-3d';
import { scanSource } from '../../web/core/projection-source';
import { checkReduction, describeReduction, reducedGeometry, reduceSource } from '../../web/core/reduction';
import { analyticConeProjections } from '../../web/core/simulate/analytic-cone';
import { asCalibratedViews } from '../../web/core/geometry/calibrated';

const fine = validateGeometry({
  kind: 'cone', detector: { shape: 'flat', channels: 61, rows: 40, pitch: [2, 2.5], offset: [3, -4] },
  sourceIsocenter: 400, sourceDetector: 700, anglesDeg: { start: 10, step: 24, count: 15 },
});
const head = sheppLogan3d('original');

function relMax(a: Float32Array, b: Float32Array): number {
  let d = 0, s = 0;
  for (let i = 0; i < a.length; i++) {
    d = Math.max(d, Math.abs(a[i] - b[i]));
    s = Math.max(s, Math.abs(b[i]));
  }
  return d / s;
}

describe('reduced scans', () => {
  it('2 x 2 binning, every 3rd view and a row range give the projections of the reduced geometry', async () => {
    const r = { bin: 2, viewStep: 3, rows: [5, 36] as [number, number] };
    const g = reducedGeometry(fine, r);
    expect(g.detector).toMatchObject({ channels: 30, rows: 15, pitch: [4, 5] });
    expect(g.anglesDeg).toEqual({ start: 10, step: 72, count: 5 });
    const measured = await analyticConeProjections(head, fine);
    const binned = await reduceSource({ ...scanSource({ geometry: fine, data: measured }), chunkViews: 4 }, r).read(0, 5);
    const exact = await analyticConeProjections(head, g, 2);
    expect(relMax(binned, exact)).toBeLessThan(1e-5);
  });

  it('calibrated views keep their positions, their steps span the binned cells, and only the kept views remain', async () => {
    const cal = asCalibratedViews(fine);
    const g = reducedGeometry(cal, { bin: 4, viewStep: 2 });
    expect(viewCount(g)).toBe(8);
    const [was, now] = [cal.views![2], g.views![1]];
    expect(now).toEqual({ ...was, channelStep: was.channelStep.map((x) => x * 4), rowStep: was.rowStep.map((x) => x * 4) });
    // Still a valid description: every step as long as its pitch (the validator's rule).
    expect(validateGeometry(JSON.parse(JSON.stringify(g))).views![1].channelStep).toEqual(now.channelStep);
    const measured = await analyticConeProjections(head, cal);
    const binned = await reduceSource(scanSource({ geometry: cal, data: measured }), { bin: 4, viewStep: 2 }).read(2, 6);
    const exact = await analyticConeProjections(head, g, 4);
    expect(relMax(binned, exact.subarray(2 * 150, 6 * 150))).toBeLessThan(1e-5);
  });

  it('reads the same values in any chunking of views', async () => {
    const data = Float32Array.from({ length: 15 * 40 * 61 }, (_, i) => Math.cos(i));
    const src = scanSource({ geometry: fine, data });
    const r = { bin: 2, viewStep: 2 };
    const all = await reduceSource(src, r).read(0, 8);
    const parts = reduceSource({ ...src, chunkViews: 3 }, r);
    const n = 30 * 20;
    for (const [a, b] of [[0, 3], [3, 4], [4, 8]]) expect(await parts.read(a, b)).toEqual(all.subarray(a * n, b * n));
  });

  it('refuses what it cannot do, naming the field', () => {
    expect(() => checkReduction({ bin: 3 }, fine, 'import')).toThrow(InputError);
    expect(() => checkReduction({ bin: 3 }, fine, 'import')).toThrow(/import\.bin: got 3, expected 1, 2 or 4/);
    expect(() => checkReduction({ rows: [10, 50] }, fine)).toThrow(/reduction\.rows: got \[10, 50\), the detector has 40 rows/);
    expect(() => checkReduction({ rows: [7, 7] }, fine)).toThrow(/reduction\.rows: got \[7,7\], expected \[first, end\)/);
    expect(() => checkReduction({ viewStep: 0 }, fine)).toThrow(/viewStep: got 0/);
    expect(checkReduction({ bin: 1, viewStep: 1 }, fine)).toEqual({});
    expect(describeReduction({ bin: 2, viewStep: 2, rows: [5, 36] })).toBe('2 x 2 detector binning, every 2nd view, rows 5 to 35');
  });
});
