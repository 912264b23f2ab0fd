import { describe, expect, it } from 'vitest';
import { smoothAcrossViews } from '../../web/core/truncation/edges';
import { tailValue } from '../helpers/water-tail';
import { constrainedCylinder, cylinderWithLength, fitCylinder, tailArea, tailLength } from '../../web/core/truncation/water-fit';

describe('water cylinder fit (Hsieh et al. 2004)', () => {
  // REFERENCES.md [hsieh-2004], worked example [D]: mu = 0.02/mm, R = 120 mm, x_c = -30 mm,
  // t_e = 60 mm give p_e = 3.174902, s_e = -0.045356/mm; the fit recovers d = 90, R = 120, and
  // the tail ends at x_c + R = 90 mm, i.e. 30 mm beyond the edge.
  it('recovers the cylinder of the worked example from edge value and slope', () => {
    const mu = 0.02, R = 120, xc = -30, te = 60;
    const pe = 2 * mu * Math.sqrt(R * R - (te - xc) ** 2);
    const se = (-2 * mu * (te - xc)) / Math.sqrt(R * R - (te - xc) ** 2);
    expect(pe).toBeCloseTo(3.174902, 6);
    expect(se).toBeCloseTo(-0.045356, 6);
    const fit = fitCylinder(pe, se, mu);
    expect(fit.inset).toBeCloseTo(90, 9);
    expect(fit.radius).toBeCloseTo(120, 9);
    const t = constrainedCylinder(pe, se, mu, 1000);
    expect(tailLength(t)).toBeCloseTo(30, 9);
    // The tail is the cylinder's projection beyond the edge: 2 mu sqrt(R^2 - (t - x_c)^2).
    for (const delta of [0, 5, 17.5, 29.9]) expect(tailValue(t, delta)).toBeCloseTo(2 * mu * Math.sqrt(R * R - (te + delta - xc) ** 2), 9);
    expect(tailValue(t, 30.5)).toBe(0);
  });

  it('constrains a rising edge to the cylinder centred on the edge, and caps the length', () => {
    // Physical constraint (REFERENCES.md [hsieh-2004], Hsieh 2004): no tail rising beyond the edge.
    const mu = 0.02, pe = 4;
    const t = constrainedCylinder(pe, +0.01, mu, 1000);
    expect(t.inset).toBe(0);
    expect(t.radius).toBeCloseTo(pe / (2 * mu), 12);
    expect(tailLength(constrainedCylinder(pe, -0.01, mu, 12))).toBeCloseTo(12, 9);
    expect(tailValue(constrainedCylinder(pe, -0.01, mu, 12), 0)).toBeCloseTo(pe, 9);
  });

  it('cylinderWithLength keeps the edge value, and its area is the segment integral', () => {
    const mu = 0.0206;
    for (const [pe, L] of [[3, 40], [3, 90], [0.5, 60]]) {
      const t = cylinderWithLength(pe, L, mu);
      expect(tailValue(t, 0)).toBeCloseTo(pe, 9);
      expect(tailLength(t)).toBeCloseTo(L, 9);
      // Midpoint rule on a fine grid (independent of the closed form).
      let area = 0;
      const n = 200000;
      for (let i = 0; i < n; i++) area += tailValue(t, ((i + 0.5) * L) / n) * (L / n);
      expect(tailArea(t)).toBeCloseTo(area, 4);
    }
  });
});

describe('smoothing fitted tail lengths across views', () => {
  // Hsieh et al. 2004 low-pass the fits across neighbouring views; a median first keeps one bad
  // fit from spreading (common practice).
  it('removes a single outlier, keeps a constant, wraps around a full turn and skips uncut views', () => {
    const x = new Float64Array(36).fill(40);
    x[5] = 400;
    const valid = new Uint8Array(36).fill(1);
    valid[20] = 0;
    x[20] = 0;
    const s = smoothAcrossViews(x, valid, 3, true);
    for (let v = 0; v < 36; v++) expect(s[v]).toBe(v === 20 ? 0 : 40);
    const ramp = Float64Array.from({ length: 36 }, (_, v) => v);
    const r = smoothAcrossViews(ramp, new Uint8Array(36).fill(1), 2, true);
    expect(r[10]).toBeCloseTo(10, 12);
    // View 0's neighbours across the wrap are 34 and 35: the median window {34, 35, 0, 1, 2}.
    expect(r[0]).toBeGreaterThan(1);
  });
});
