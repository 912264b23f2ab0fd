import { describe, expect, it } from 'vitest';
import { cropDetector } from '../../web/core/geometry/presets';
import { validateGeometry } from '../../web/core/geometry/validate';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import type { EllipsePhantom } from '../../web/core/phantoms/ellipse';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { analyseEdges } from '../../web/core/truncation/edges';
import { massConsistency, massUnavailable } from '../../web/core/truncation/mass';
import { planExtension } from '../../web/core/truncation/extension-plan';
import { extendScan } from '../../web/core/truncation/extend-scan';
import { channelWidthS } from '../../web/core/truncation/ray-coords';
import { localWorkspace } from '../helpers/engine';

const parallel = (channels: number, pitch: number, views = 180) =>
  validateGeometry({ kind: 'parallel', detector: { channels, pitch, offset: [0, 0] }, anglesDeg: { start: 0, step: 180 / views, count: views } });

// One uniform ellipse (density 1/mm): semi-axes 70 and 35 mm, rotated 30 degrees, centred at (10, -5) mm.
const ELLIPSE: EllipsePhantom = { name: 'ellipse', muWater: 0.02, radius: 82, ellipses: [{ cx: 10, cy: -5, a: 70, b: 35, phiDeg: 30, value: 0.02 }] };

/**
 * Mass of the ellipse's parallel projection inside [t0, t1] at view angle theta (closed form):
 * P(t) = (2 rho A B / a^2) sqrt(a^2 - (t - c)^2) (Kak & Slaney ch. 3, REFERENCES.md [ellipse-projection]), with
 * this project's detector axis (-sin theta, cos theta), and
 * int k sqrt(a^2 - x^2) dx = k/2 (x sqrt(a^2 - x^2) + a^2 asin(x / a)).
 */
function measuredMass(theta: number, t0: number, t1: number): number {
  const e = ELLIPSE.ellipses[0], phi = (e.phiDeg * Math.PI) / 180;
  const ax = [-Math.sin(theta), Math.cos(theta)];
  const along = ax[0] * Math.cos(phi) + ax[1] * Math.sin(phi), across = -ax[0] * Math.sin(phi) + ax[1] * Math.cos(phi);
  const a = Math.sqrt(e.a ** 2 * along ** 2 + e.b ** 2 * across ** 2);
  const c = e.cx * ax[0] + e.cy * ax[1];
  const k = (2 * e.value * e.a * e.b) / (a * a);
  const F = (x: number) => {
    const y = Math.max(-a, Math.min(a, x));
    return (k / 2) * (y * Math.sqrt(a * a - y * y) + a * a * Math.asin(y / a));
  };
  return F(t1 - c) - F(t0 - c);
}

describe('mass consistency (zeroth Helgason-Ludwig condition)', () => {
  it('complete parallel data of the Shepp-Logan phantom have the same total in every view, to 0.1%', () => {
    // REFERENCES.md [ellipse-projection]: total mass of the original phantom = 2.20175669 in table units; here
    // one unit is 100 mm and densities are table values per mm, so the total is 22017.5669 mm.
    const p = sheppLogan('original', 100, 1);
    const scan = { geometry: parallel(401, 0.5), data: analyticSinogram(p, parallel(401, 0.5)) };
    const m = massConsistency(scan, analyseEdges(scan).threshold);
    expect(m.basis).toBe('complete-views');
    expect(m.completeViews).toBe(180);
    for (const t of m.totals) expect(Math.abs(t / 22017.5669 - 1)).toBeLessThan(1e-3);
    expect(m.spread).toBeLessThan(1e-3);
  });

  it('truncated parallel views miss exactly the mass outside the detector', () => {
    const g = parallel(201, 0.5);
    const scan = { geometry: g, data: analyticSinogram(ELLIPSE, g) };
    const a = analyseEdges(scan);
    const m = massConsistency(scan, a.threshold);
    const total = Math.PI * 70 * 35 * 0.02;
    expect(m.basis).toBe('complete-views');
    expect(Math.abs(m.totalMass / total - 1)).toBeLessThan(1e-3);
    let truncated = 0;
    for (let v = 0; v < 180; v++) {
      const theta = (v * Math.PI) / 180;
      const expected = total - measuredMass(theta, -50.25, 50.25); // detector edges at +-(100.5 x 0.5) mm
      if (m.complete[v]) {
        expect(expected / total).toBeLessThan(2e-3);
        continue;
      }
      truncated++;
      expect(Math.abs(m.missing[v] - expected) / total, `view ${v}`).toBeLessThan(1e-3);
    }
    expect(truncated).toBeGreaterThan(60);
    expect(truncated).toBeLessThan(180);
  });

  it('complete fan data rebinned to parallel views are consistent to 0.5%', () => {
    const g = validateGeometry({ kind: 'fan', detector: { shape: 'flat', channels: 400, pitch: 0.9 }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 1, count: 360 } });
    const p = sheppLogan('original', 100, 0.02);
    const scan = { geometry: g, data: analyticSinogram(p, g) };
    expect(massUnavailable(scan)).toBeUndefined();
    const m = massConsistency(scan, analyseEdges(scan).threshold);
    expect(m.form).toBe('rebinned');
    expect(m.completeViews).toBe(360);
    expect(Math.abs(m.totalMass / (22017.5669 * 0.02) - 1)).toBeLessThan(5e-3);
    expect(m.spread).toBeLessThan(5e-3);
    const short = { ...scan, geometry: { ...g, anglesDeg: { start: 0, step: 0.6, count: 360 } } };
    expect(massUnavailable(short)).toMatch(/full turn/);
  });

  it('extensions scaled to the missing mass restore each view total', async () => {
    const g = parallel(201, 0.5);
    const scan = { geometry: g, data: analyticSinogram(ELLIPSE, g), muWater: 0.02 };
    const total = Math.PI * 70 * 35 * 0.02;
    const ws = await localWorkspace();
    for (const method of ['water', 'edge', 'cosine', 'mirror'] as const) {
      const errors = async (mass: null | undefined) => {
        const plan = planExtension(scan, method, undefined, mass);
        const ext = await extendScan(ws, scan, plan);
        const ds = channelWidthS(ext.geometry);
        const nCh = ext.geometry.detector.channels;
        const out: number[] = [];
        for (let v = 0; v < 180; v++) {
          let t = 0;
          for (let k = 0; k < nCh; k++) t += ext.data[v * nCh + k] * ds[k];
          out.push(Math.abs(t / total - 1));
        }
        return { plan, median: [...out].sort((x, y) => x - y)[90] };
      };
      const scaled = await errors(undefined);
      const unscaled = await errors(null);
      expect(scaled.plan.summary.massScaledTails, method).toBeGreaterThan(60);
      expect(scaled.median, method).toBeLessThan(0.005);
      expect(scaled.median, method).toBeLessThanOrEqual(unscaled.median);
    }
  });
});

describe('mass consistency of fan-beam extensions (rebinned)', () => {
  it('tails scaled along the rebinning map bring the rebinned view totals closer to the object mass', async () => {
    // Fan beam, detector shifted so that only the right side is cut off (as in detect.test.ts).
    const full = validateGeometry({ kind: 'fan', detector: { shape: 'flat', channels: 400, pitch: 1 }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 1, count: 360 } });
    const { geometry: g } = cropDetector(full, 236, -28);
    const p: EllipsePhantom = { name: 'e', muWater: 0.02, radius: 70, ellipses: [{ cx: 0, cy: 0, a: 70, b: 30, phiDeg: 0, value: 0.02 }] };
    const scan = { geometry: g, data: analyticSinogram(p, g), muWater: 0.02 };
    const total = Math.PI * 70 * 30 * 0.02;
    const ws = await localWorkspace();
    const worst = async (mass: null | undefined) => {
      const plan = planExtension(scan, 'cosine', undefined, mass);
      const ext = await extendScan(ws, scan, plan);
      const m = massConsistency(ext, 0.01);
      return { plan, error: Math.max(...Array.from(m.totals, (t) => Math.abs(t / total - 1))) };
    };
    const scaled = await worst(undefined), unscaled = await worst(null);
    expect(scaled.plan.summary.massBasis).toBe('complete-views');
    expect(scaled.plan.summary.massScaledTails).toBeGreaterThan(100);
    expect(scaled.error).toBeLessThan(0.5 * unscaled.error);
  });
});
