import { describe, expect, it } from 'vitest';
import { coneFrame, coneRay } from '../../web/core/geometry/cone';
import { firstChannelU, firstRowV, viewVectors } from '../../web/core/geometry/view-vectors';
import { inside, valueAt } from '../../web/core/phantoms/ellipse';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { sheppLogan3d } from '../../web/core/phantoms/shepp-logan-3d';
import { solidChord, solidLineIntegral } from '../helpers/solid-line';
import { insideSolid, solidValueAt, voxelize, type Solid, type SolidPhantom } from '../../web/core/phantoms/solid';
import { thorax } from '../../web/core/phantoms/thorax';
import { thorax3d } from '../../web/core/phantoms/thorax-3d';
import { analyticConeProjections } from '../../web/core/simulate/analytic-cone';
import { seededRandom } from '../../web/core/simulate/noise';
import { cubicGrid } from '../../web/core/volume';
import { cone } from '../helpers/cone';

describe('solid chords', () => {
  it('reproduces the ray-ellipsoid check value of REFERENCES.md [ellipsoid-chord]', () => {
    // Centre (5, -3, 8), semi-axes (60, 40, 30), rotated 25 degrees about z; the ray from
    // (-500, 10, 5) to (500, -20, 30) has a chord of 101.388112 mm.
    const e: Solid = { shape: 'ellipsoid', cx: 5, cy: -3, cz: 8, a: 60, b: 40, c: 30, phiDeg: 25, value: 1 };
    const d = [1000, -30, 25];
    const l = Math.hypot(...d);
    expect(solidChord(e, [-500, 10, 5], d.map((x) => x / l))).toBeCloseTo(101.388112, 5);
  });

  // A chord is the length of the ray inside the solid: it must match a numerical integral of
  // the inside test along the ray (definition), for random rays, both shapes.
  it.each(['ellipsoid', 'cylinder'] as const)('%s: chords match the numerically integrated inside test', (shape) => {
    const e: Solid = { shape, cx: 4, cy: -7, cz: 3, a: 30, b: 18, c: 22, phiDeg: 35, value: 1 };
    const rand = seededRandom(17);
    let hits = 0;
    for (let t = 0; t < 40; t++) {
      const p = [-100, (rand() - 0.5) * 60, (rand() - 0.5) * 50];
      const q = [100, (rand() - 0.5) * 60, (rand() - 0.5) * 50];
      const d = [q[0] - p[0], q[1] - p[1], q[2] - p[2]];
      const l = Math.hypot(d[0], d[1], d[2]);
      const step = 0.005;
      let inside = 0;
      for (let s = step / 2; s < l; s += step) {
        if (insideSolid(e, p[0] + (d[0] * s) / l, p[1] + (d[1] * s) / l, p[2] + (d[2] * s) / l)) inside += step;
      }
      const c = solidChord(e, p, d.map((x) => x / l));
      if (c > 0) hits++;
      expect(Math.abs(c - inside)).toBeLessThan(0.02);
    }
    expect(hits).toBeGreaterThan(10);
  });

  it('a cylinder along its axis is as long as the cylinder', () => {
    const e: Solid = { shape: 'cylinder', cx: 0, cy: 0, cz: 5, a: 10, b: 6, c: 40, phiDeg: 0, value: 1 };
    expect(solidChord(e, [2, 1, -200], [0, 0, 1])).toBeCloseTo(80, 9);
    expect(solidChord(e, [20, 1, -200], [0, 0, 1])).toBe(0);
  });
});

describe('voxelization', () => {
  // Volume of an ellipsoid 4/3 pi a b c, of an elliptic cylinder 2 pi a b h: the voxel sums
  // (partial volumes at the surface) must agree within 0.5%.
  it.each([['ellipsoid', (4 / 3) * Math.PI * 30 * 20 * 25], ['cylinder', 2 * Math.PI * 30 * 20 * 25]] as const)('%s: voxel sum equals the solid volume', (shape, exact) => {
    const p: SolidPhantom = { name: 's', muWater: 1, radius: 40, halfHeight: 30, solids: [{ shape, cx: 1.3, cy: -2.1, cz: 0.7, a: 30, b: 20, c: 25, phiDeg: 20, value: 1 }] };
    const grid = cubicGrid(80, 1, 64);
    const v = voxelize(p, grid, 3);
    let sum = 0;
    for (const x of v) sum += x;
    expect(Math.abs(sum - exact) / exact).toBeLessThan(0.005);
  });
});

describe("Kak & Slaney's 3D Shepp-Logan head (table from memory)", () => {
  // What can be checked against the verified 2D table (REFERENCES.md [shepp-logan-1974]): at z = -0.25 (table
  // units) the 3D ventricles, ellipse e and tumour f have exactly the 2D ellipses' sections;
  // the skull ellipsoid a has the 2D ellipse a at z = 0. Compared point by point on a fine grid.
  const p3 = sheppLogan3d('original', 1, 1);
  const p2 = sheppLogan('original', 1, 1);
  const grid = Array.from({ length: 201 }, (_, i) => -1 + i / 100);
  const sameSection = (s3: number, s2: number, z: number) => {
    let differ = 0, within = 0;
    for (const x of grid) {
      for (const y of grid) {
        const a = insideSolid(p3.solids[s3], x, y, z);
        if (a !== inside(p2.ellipses[s2], x, y)) differ++;
        if (a) within++;
      }
    }
    return { differ, within };
  };
  it.each([[2, 3, 'c = 2D d'], [3, 2, 'd = 2D c'], [4, 4, 'e'], [5, 5, 'f']])('ellipsoid %i at z = -0.25 has the section of 2D ellipse %i (%s)', (s3, s2) => {
    const r = sameSection(s3, s2, -0.25);
    expect(r.within).toBeGreaterThan(10);
    expect(r.differ).toBe(0);
  });
  it('the skull ellipsoid a has the 2D ellipse a at z = 0; b has its semi-axes, centred at y = 0', () => {
    expect(sameSection(0, 0, 0).differ).toBe(0);
    expect([p3.solids[1].a, p3.solids[1].b]).toEqual([p2.ellipses[1].a, p2.ellipses[1].b]);
    expect(p2.ellipses[1].cy).toBeCloseTo(-0.0184, 9);
    expect(p3.solids[1].cy).toBe(0);
  });
  it('the central slice z = 0 cuts only a, b and e (it is not the 2D phantom)', () => {
    const cut = p3.solids.map((s) => grid.some((x) => grid.some((y) => insideSolid(s, x, y, 0))));
    expect(cut).toEqual([true, true, false, false, true, false, false, false, false, false]);
  });
});

describe('3D demo thorax', () => {
  // By construction the central slice is the 2D demo: every part has a copy centred on z = 0
  // whose section there is the 2D ellipse. Checked point by point on a 2 mm grid.
  it('its central slice equals the 2D thorax', () => {
    const t3 = thorax3d(), t2 = thorax();
    let checked = 0;
    for (let x = -290; x <= 290; x += 2) {
      for (let y = -130; y <= 130; y += 2) {
        const v2 = valueAt(t2, x, y);
        expect(Math.abs(solidValueAt(t3, x, y, 0) - v2)).toBeLessThan(1e-12);
        if (v2 !== 0) checked++;
      }
    }
    expect(checked).toBeGreaterThan(15_000);
  });
  it('ends 150 mm either side of the centre', () => {
    const t3 = thorax3d();
    expect(solidValueAt(t3, 0, 0, 149)).toBeGreaterThan(0);
    expect(solidValueAt(t3, 0, 0, 151)).toBe(0);
  });
});

describe('analytic cone-beam projections', () => {
  // The footprint culling must not lose any contribution: compare with the plain sum over all
  // solids of every ray (rays from the same view table, coneRay).
  it('equal the ray-by-ray sum over all solids', async () => {
    const g = cone({ channels: 64, rows: 24, pitch: 10, views: 5, R: 800, D: 1200, offset: [12, -30], startDeg: 17 });
    const p = thorax3d();
    const got = await analyticConeProjections(p, g);
    const views = viewVectors(g);
    const u0 = firstChannelU(g), v0 = firstRowV(g);
    let worst = 0, nonzero = 0;
    for (let v = 0; v < 5; v++) {
      const f = coneFrame(views, v);
      for (let r = 0; r < 24; r++) {
        for (let k = 0; k < 64; k++) {
          const ray = coneRay(f, u0 + k * 10, v0 + r * 10);
          const want = solidLineIntegral(p, ray.p, ray.d);
          if (want > 0) nonzero++;
          worst = Math.max(worst, Math.abs(got[(v * 24 + r) * 64 + k] - want));
        }
      }
    }
    expect(nonzero).toBeGreaterThan(2000);
    expect(worst).toBeLessThan(1e-5);
  });
});
