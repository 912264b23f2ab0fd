import { describe, expect, it } from 'vitest';
import { fbpPreweights, parkerWeight } from '../../web/core/recon/fbp-weights';
import { validateGeometry } from '../../web/core/geometry/validate';

const deg = Math.PI / 180;

describe('Parker short-scan weights (Parker 1982; REFERENCES.md [parker-1982])', () => {
  // Values for delta = 15 degrees, REFERENCES.md [parker-1982] [D].
  it.each([
    [0, 0, 0],
    [15, 0, 0.5],
    [30, 0, 1],
    [10, 5, 0.5],
    [185, 5, 0.691342],
    [195, 0, 0.5],
    [210, 0, 0],
  ])('w(beta=%i deg, gamma=%i deg) = %f', (b, g, w) => {
    expect(parkerWeight(b * deg, g * deg, 15 * deg)).toBeCloseTo(w, 5);
  });

  it('conjugate rays (beta, gamma) and (beta + pi + 2 gamma, -gamma) sum to 1', () => {
    const delta = 12 * deg;
    for (let b = 0; b <= Math.PI - 2 * delta; b += 0.05) {
      for (let g = -delta; g <= delta; g += delta / 7) {
        const sum = parkerWeight(b, g, delta) + parkerWeight(b + Math.PI + 2 * g, -g, delta);
        expect(sum).toBeCloseTo(1, 6);
      }
    }
  });
});

describe('FBP pre-weights', () => {
  const geom = (count: number, step: number) => validateGeometry({
    kind: 'fan', detector: { channels: 64, pitch: 2 }, sourceIsocenter: 500, sourceDetector: 1000,
    anglesDeg: { start: 0, step, count },
  });

  it('a full turn weighs every ray 1/2 (each line measured twice) times the angular step and cos(gamma)', () => {
    const { weights, scanType } = fbpPreweights(geom(360, 1));
    expect(scanType).toBe('full');
    const gamma = Math.atan((-31.5 * 2) / 1000);
    expect(weights[0]).toBeCloseTo(0.5 * deg * Math.cos(gamma), 9);
  });

  it('in our convention (u along (-sin b, cos b)) the conjugate of (beta, gamma) is (beta + pi - 2 gamma, -gamma): Parker weights of a short scan sum to 1 over conjugate pairs', () => {
    const g = geom(400, 0.5); // 200 degrees > 180 + fan angle (7.3 degrees)
    const { weights, scanType } = fbpPreweights(g);
    expect(scanType).toBe('short');
    const nCh = 64;
    let checked = 0;
    for (let v = 0; v < 400; v += 7) {
      for (const k of [3, 20, 40, 60]) {
        const u = (k - 31.5) * 2;
        const gamma = Math.atan(u / 1000);
        const bConj = v * 0.5 * deg + Math.PI - 2 * gamma;
        const vc = bConj / (0.5 * deg);
        const kc = 63 - k; // -gamma is the mirrored channel
        if (vc < 1 || vc > 398) continue;
        // Parker weights are smooth in beta: interpolate linearly between the two nearest views.
        const red = (view: number, ch: number) => weights[view * nCh + ch] / (0.5 * deg * Math.cos(gamma));
        const v0 = Math.floor(vc), t = vc - v0;
        const w1 = red(v, k);
        const w2 = (1 - t) * red(v0, kc) + t * red(v0 + 1, kc);
        expect(Math.abs(w1 + w2 - 1)).toBeLessThan(0.01);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(0);
  });

  it('warns on a limited-angle scan', () => {
    const { warnings, scanType } = fbpPreweights(geom(90, 1));
    expect(scanType).toBe('limited');
    expect(warnings.join()).toMatch(/limited-angle/);
  });
});
