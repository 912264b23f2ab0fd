// Projection completion with knowledge, piece by piece, against analytic projections of
// ellipses (Kak & Slaney 1988 ch. 3, REFERENCES.md [ellipse-projection]), the
// Helgason-Ludwig conditions on exact data ([helgason-ludwig]) and elementary geometry.
import { describe, expect, it } from 'vitest';
import { baseTails } from '../../web/core/completion/domain-tails';
import { tableExtension } from '../../web/core/completion/fan-tails';
import { hlDeparture, measuredMoments, objectMomentsFrom } from '../../web/core/completion/moments';
import { outlineBeyondStrip, outlineRaster } from '../../web/core/completion/outline-moments';
import { rebinToParallelDomain } from '../../web/core/completion/parallel-domain';
import { completedMoments, stretchToMass, stretchToMoments } from '../../web/core/completion/stretch';
import { suggestedOutline } from '../../web/core/completion/suggested-outline';
import { InputError } from '../../web/core/errors';
import { squareGrid } from '../../web/core/image';
import type { EllipsePhantom } from '../../web/core/phantoms/ellipse';
import { fbp2d } from '../../web/core/recon/fbp';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { analyseEdges } from '../../web/core/truncation/edges';
import { localWorkspace } from '../helpers/engine';
import { fanCurved, fanFlat, parallel } from '../helpers/geometries';

// One uniform ellipse: semi-axes 40 and 20 mm, turned 30 degrees, centred at (30, -50) mm.
const ELLIPSE: EllipsePhantom = { name: 'ellipse', muWater: 0.02, radius: 100, ellipses: [{ cx: 30, cy: -50, a: 40, b: 20, phiDeg: 30, value: 0.02 }] };
const disc = (r: number, cx = 0, cy = 0): EllipsePhantom => ({ name: 'disc', muWater: 0.02, radius: r + Math.hypot(cx, cy), ellipses: [{ cx, cy, a: r, b: r, phiDeg: 0, value: 0.02 }] });

describe('the parallel domain', () => {
  // The object's mass is its area times its density (pi a b rho) and its centroid the ellipse's
  // centre: every rebinning must recover both from complete data (elementary geometry).
  const cases: Array<[string, ReturnType<typeof fanFlat>]> = [
    ['fan beam, flat detector, full turn', fanFlat(400, 1, 360)],
    ['fan beam, curved detector, full turn', fanCurved(400, 1, 360)],
    ['parallel beam over 180 degrees', parallel(300, 1, 180)],
    ['fan beam, short scan of 230 degrees', fanFlat(400, 1, 230, 230)],
  ];
  it.each(cases)('%s: mass and centroid of an ellipse from complete data, to 0.1% and 0.1 mm', (_, g) => {
    const pd = rebinToParallelDomain({ geometry: g, data: analyticSinogram(ELLIPSE, g) });
    const m = measuredMoments(pd);
    const o = objectMomentsFrom(pd.angles, m.m0, m.m1);
    expect(Math.abs(o.mass / (Math.PI * 40 * 20 * 0.02) - 1)).toBeLessThan(1e-3);
    expect(Math.abs(o.cx - 30)).toBeLessThan(0.1);
    expect(Math.abs(o.cy + 50)).toBeLessThan(0.1);
    // Helgason-Ludwig orders 0 and 1 hold on exact data, and fail once the views are cut off.
    const d = hlDeparture(pd.angles, m.m0, m.m1);
    expect(d.order0).toBeLessThan(2e-3);
    expect(d.order1).toBeLessThan(2e-3);
  });

  it('truncated views break the conditions; a scan of less than 180 degrees is refused', () => {
    const g = fanFlat(120, 1, 360);
    const pd = rebinToParallelDomain({ geometry: g, data: analyticSinogram(ELLIPSE, g) });
    const m = measuredMoments(pd);
    expect(hlDeparture(pd.angles, m.m0, m.m1).order0).toBeGreaterThan(0.01);
    const limited = fanFlat(400, 1, 90, 90);
    expect(() => rebinToParallelDomain({ geometry: limited, data: analyticSinogram(ELLIPSE, limited) })).toThrow(InputError);
  });
});

describe('tails stretched to the moments', () => {
  it('water cylinder tails of a truncated disc carry its mass with stretch 1 (Hsieh et al. 2004: exact for a cylinder)', async () => {
    // A water disc of radius 90 mm, 12 mm off the isocentre, seen by a detector whose FOV radius
    // is about 45 mm: the fit of a cylinder to a cylinder's edge value and slope is the cylinder.
    const g = fanFlat(160, 1, 360);
    const p = disc(90, 12, 0);
    const pd = rebinToParallelDomain({ geometry: g, data: analyticSinogram(p, g, 4), muWater: 0.02 });
    const ws = await localWorkspace(1);
    const t = await baseTails(ws, pd, 'water', 0.02);
    const m = measuredMoments(pd);
    const mass = Math.PI * 90 * 90 * 0.02;
    stretchToMass(pd, t, m, mass, new Float64Array(t.stretch.length).fill(10));
    let worst = 0;
    for (const a of t.stretch) worst = Math.max(worst, Math.abs(a - 1));
    expect(worst).toBeLessThan(0.06);
    // The completed views meet order 0 exactly (by construction) and order 1 closely.
    const c = completedMoments(pd, t, m);
    expect(hlDeparture(pd.angles, c.m0, c.m1).order0).toBeLessThan(1e-9);
    expect(hlDeparture(pd.angles, c.m0, c.m1).order1).toBeLessThan(0.02);
  });

  it('with the centroid, both conditions hold for the true moments (views the strip covers whole need no tail)', async () => {
    const g = parallel(100, 1, 180);
    const pd = rebinToParallelDomain({ geometry: g, data: analyticSinogram(ELLIPSE, g), muWater: 0.02 });
    const ws = await localWorkspace(1);
    const t = await baseTails(ws, pd, 'water', 0.02);
    const m = measuredMoments(pd);
    const target = { mass: Math.PI * 40 * 20 * 0.02, cx: 30, cy: -50 };
    stretchToMoments(pd, t, m, target, 10);
    const c = completedMoments(pd, t, m);
    const o = objectMomentsFrom(pd.angles, c.m0, c.m1);
    expect(Math.abs(o.mass / target.mass - 1)).toBeLessThan(1e-3);
    expect(Math.abs(o.cx - 30)).toBeLessThan(0.5);
    expect(Math.abs(o.cy + 50)).toBeLessThan(0.5);
  });
});

describe('the outline beyond the measured strip', () => {
  it('a centred circle leaves pi R^2 minus the strip |s| <= S, 2 S sqrt(R^2 - S^2) + 2 R^2 asin(S / R), to 1%', () => {
    // Elementary geometry: the area of a disc within a strip through its centre.
    const g = parallel(81, 1, 90);
    const pd = rebinToParallelDomain({ geometry: g, data: new Float32Array(90 * 81) });
    const R = 100, S = pd.half * pd.ds;
    const { area, first } = outlineBeyondStrip(pd, outlineRaster({ shape: 'ellipse', cx: 0, cy: 0, a: R, b: R }));
    const expected = Math.PI * R * R - (2 * S * Math.sqrt(R * R - S * S) + 2 * R * R * Math.asin(S / R));
    for (let j = 0; j < pd.nViews; j += 15) {
      expect(Math.abs(area[j] / expected - 1)).toBeLessThan(0.01);
      // Symmetric about the isocentre: no first moment (to 0.5% of area x R).
      expect(Math.abs(first[j])).toBeLessThan(0.005 * expected * R);
    }
  });
});

describe('table extensions in FBP', () => {
  it('FBP is linear in the tails: FBP(p + t1 + t2) - FBP(p + t1) = FBP(0 + t2), to 1e-5 of the image range', async () => {
    // Kak & Slaney ch. 3: filtering and backprojection are linear operators.
    const g = fanFlat(100, 1, 120);
    const p = disc(70);
    const scan = { geometry: g, data: analyticSinogram(p, g), muWater: 0.02 };
    const ws = await localWorkspace(1);
    const pd = rebinToParallelDomain(scan);
    const t = await baseTails(ws, pd, 'water', 0.02);
    const grid = squareGrid(64, 3);
    const ext = (scale: number) => {
      t.stretch.fill(scale);
      return tableExtension(g, pd, t, 80, 80);
    };
    const t1 = ext(1), t2 = ext(0.5);
    const both = { ...t1, table: t1.table!.map((v, i) => v + t2.table![i]) };
    const a = (await fbp2d(ws, scan, { grid, extension: both })).image.data;
    const b = (await fbp2d(ws, scan, { grid, extension: t1 })).image.data;
    const c = (await fbp2d(ws, { ...scan, data: new Float32Array(scan.data.length) }, { grid, extension: t2 })).image.data;
    let range = 0, worst = 0;
    for (let i = 0; i < a.length; i++) {
      range = Math.max(range, Math.abs(a[i]));
      worst = Math.max(worst, Math.abs(a[i] - b[i] - c[i]));
    }
    expect(worst).toBeLessThan(1e-5 * range + 1e-7);
  });
});

describe('the outline the data suggest', () => {
  it('a truncated water disc suggests its own circle, to 3 mm (Hsieh et al. 2004: the fit is exact for a cylinder)', () => {
    const g = fanFlat(160, 1, 360);
    const s = suggestedOutline(analyseEdges({ geometry: g, data: analyticSinogram(disc(90, 12, -5), g, 4), muWater: 0.02 }))!;
    expect(Math.abs(s.ellipse.cx - 12)).toBeLessThan(3);
    expect(Math.abs(s.ellipse.cy + 5)).toBeLessThan(3);
    expect(Math.abs(s.ellipse.a - 90)).toBeLessThan(3);
    expect(Math.abs(s.ellipse.b - 90)).toBeLessThan(3);
    expect(s.estimatedShare).toBe(1);
    expect(s.option).toMatch(/^ellipse:/);
  });

  it('an untruncated ellipse suggests itself from where the data fall to air, to 2 mm', () => {
    const g = fanFlat(400, 1, 360);
    const s = suggestedOutline(analyseEdges({ geometry: g, data: analyticSinogram(ELLIPSE, g, 4), muWater: 0.02 }))!;
    expect(s.estimatedShare).toBe(0);
    expect(Math.abs(s.ellipse.cx - 30)).toBeLessThan(2);
    expect(Math.abs(s.ellipse.cy + 50)).toBeLessThan(2);
    expect(Math.abs(Math.max(s.ellipse.a, s.ellipse.b) - 40)).toBeLessThan(2);
    expect(Math.abs(Math.min(s.ellipse.a, s.ellipse.b) - 20)).toBeLessThan(2);
  });
});
