import { describe, expect, it } from 'vitest';
import { cropDetector } from '../../web/core/geometry/presets';
import { validateGeometry } from '../../web/core/geometry/validate';
import { firstChannelU, fovRadius, kernelKind, rayAt, viewVectors } from '../../web/core/geometry/view-vectors';
import { lineIntegral, type EllipsePhantom } from '../../web/core/phantoms/ellipse';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { addPhotonNoise } from '../../web/core/simulate/noise';
import { detectTruncation } from '../../web/core/truncation/detect';

// An elongated water ellipse (70 x 30 mm) and a fan-beam detector shifted so that its rays
// reach 80 mm left of the isocentre but only 50 mm right of it: the left side is never cut
// off, the right side whenever the ellipse's projected half-width exceeds 50 mm.
const full = validateGeometry({ kind: 'fan', detector: { shape: 'flat', channels: 400, pitch: 1 }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 1, count: 360 } });
const { geometry: g } = cropDetector(full, 236, -28);
const ellipse: EllipsePhantom = { name: 'ellipse', muWater: 0.02, radius: 70, ellipses: [{ cx: 0, cy: 0, a: 70, b: 30, phiDeg: 0, value: 0.02 }] };

/** Exact line integral along the outermost channel's ray of each view, per side. */
function edgeTruth(): Array<[number, number]> {
  const views = viewVectors(g), kind = kernelKind(g);
  const u0 = firstChannelU(g), u1 = u0 + (g.detector.channels - 1) * g.detector.pitch[0];
  return Array.from({ length: 360 }, (_, v) => [u0, u1].map((u) => {
    const r = rayAt(views, v, kind, u);
    return lineIntegral(ellipse, r.px, r.py, r.dx, r.dy);
  }) as [number, number]);
}

describe('truncation detection with a detector offset', () => {
  const truth = edgeTruth();

  it('flags exactly the views whose object reaches the detector edge (noise-free)', () => {
    const r = detectTruncation({ geometry: g, data: analyticSinogram(ellipse, g), muWater: 0.02 });
    const expected = truth.map(([, right]) => right > 0);
    expect(expected.filter(Boolean).length).toBeGreaterThan(100);
    expect(expected.filter((x) => !x).length).toBeGreaterThan(100);
    expect(r.views.map((v) => v.right.truncated)).toEqual(expected);
    expect(r.views.every((v) => !v.left.truncated)).toBe(true);
    expect(r.summary.worstSide).toBe('right');
    expect(r.summary.leftFraction).toBe(0);
    // The FOV of a full turn with an offset detector reaches to its farther edge (80 mm).
    expect(fovRadius(g)).toBeGreaterThan(75);
    // The ellipse's reach beyond the right edge: at most 70 - 50 = 20 mm (water cylinder fit,
    // a few mm of slack for the fit of an ellipse by a circle).
    for (const v of r.views) if (v.right.truncated) expect(v.right.extentMm).toBeLessThan(25);
    // Untruncated sides report where the object ends: within a channel of the true edge.
    expect(Math.abs(Math.min(...r.views.map((v) => v.left.boundaryMm)) + 70)).toBeLessThan(1.5);
    expect(r.mass).toMatchObject({ form: 'rebinned', basis: 'complete-views' });
  });

  it('with photon noise, flags every clearly cut-off view and no uncut view', () => {
    const data = analyticSinogram(ellipse, g);
    addPhotonNoise(data, 1e5, 11);
    const r = detectTruncation({ geometry: g, data, muWater: 0.02 });
    let borderline = 0;
    truth.forEach(([left, right], v) => {
      expect(r.views[v].left.truncated).toBe(left > 0);
      if (right === 0) expect(r.views[v].right.truncated, `view ${v}`).toBe(false);
      else if (right > 2 * r.threshold) expect(r.views[v].right.truncated, `view ${v}`).toBe(true);
      else borderline++;
    });
    // Views whose edge chord is below two thresholds (a few mm of water) may go either way.
    expect(borderline).toBeLessThanOrEqual(8);
  });
});

describe('untrustworthy data', () => {
  it('reports non-finite line integrals instead of analysing them', () => {
    const data = analyticSinogram(ellipse, g);
    data[5 * 236 + 7] = NaN;
    data[9 * 236] = Infinity;
    expect(() => detectTruncation({ geometry: g, data })).toThrow(/scan: 2 of 84960 line integrals are not finite \(NaN or infinity\), the first at view 5 channel 7/);
  });
});
