import { describe, expect, it } from 'vitest';
import { coneFrame, projectPoint } from '../../web/core/geometry/cone';
import { firstChannelU, firstRowV, viewVectors } from '../../web/core/geometry/view-vectors';
import { Projector3d } from '../../web/core/recon/projector3d';
import { voxelize, type SolidPhantom } from '../../web/core/phantoms/solid';
import { analyticConeProjections } from '../../web/core/simulate/analytic-cone';
import { seededRandom } from '../../web/core/simulate/noise';
import type { VolumeGrid } from '../../web/core/volume';
import { localWorkspace } from '../helpers/engine';
import { cone, project } from '../helpers/cone';

describe('3D Joseph forward projector', () => {
  // REFERENCES.md [ellipsoid-chord]: the line integral through a uniform ellipsoid is density x chord, with the
  // chord from the ray-quadric intersection. Interior rays (whose neighbours 4 mm away at the
  // isocentre also cross the ellipsoid) must agree within 1%. The error is the voxelization of
  // the surface (first order in the voxel size: 1.6% with 1 mm voxels, 0.8% with 0.5 mm).
  it('matches analytic ellipsoid line integrals within 1% on interior rays', async () => {
    const ws = await localWorkspace(2);
    const g = cone({ channels: 150, rows: 110, pitch: 1.6, views: 24, R: 260, D: 520 });
    const grid: VolumeGrid = { nx: 200, ny: 200, nz: 128, dx: 0.5, dy: 0.5, dz: 0.5, cx: 0, cy: 0, cz: 4 };
    const p: SolidPhantom = {
      name: 'e', muWater: 0.02, radius: 50, halfHeight: 30,
      solids: [{ shape: 'ellipsoid', cx: 5, cy: -3, cz: 4, a: 44, b: 30, c: 26, phiDeg: 30, value: 0.02 }],
    };
    const got = await project(ws, grid, g, voxelize(p, grid, 3));
    const exact = await analyticConeProjections(p, g);
    const { channels: nCh, rows: nRows } = g.detector;
    const m = Math.ceil((4 * 2) / 1.6); // 4 mm at the isocentre, magnification 2
    let checked = 0, worst = 0;
    for (let v = 0; v < 24; v++) {
      for (let r = m; r < nRows - m; r++) {
        for (let k = m; k < nCh - m; k++) {
          const at = (rr: number, kk: number) => exact[(v * nRows + rr) * nCh + kk];
          if (at(r, k - m) === 0 || at(r, k + m) === 0 || at(r - m, k) === 0 || at(r + m, k) === 0) continue;
          checked++;
          worst = Math.max(worst, Math.abs(got[(v * nRows + r) * nCh + k] - at(r, k)) / at(r, k));
        }
      }
    }
    expect(checked).toBeGreaterThan(50_000);
    expect(worst).toBeLessThan(0.01);
  });

  it('gives the same projections whether one or three workers share the views', async () => {
    const g = cone({ channels: 45, rows: 23, pitch: 2, views: 7, R: 200, D: 380 });
    const grid: VolumeGrid = { nx: 31, ny: 27, nz: 19, dx: 1.9, dy: 2.1, dz: 1.7, cx: 2, cy: -1, cz: 3 };
    const rand = seededRandom(3);
    const x = Float32Array.from({ length: 31 * 27 * 19 }, () => rand());
    const one = await project(await localWorkspace(1), grid, g, x);
    const three = await project(await localWorkspace(3), grid, g, x);
    expect(three).toEqual(one);
    expect(Math.max(...one)).toBeGreaterThan(1);
  });

  it('rejects rays leaning more than 45 degrees out of the rotation plane', async () => {
    const ws = await localWorkspace();
    const g = cone({ channels: 16, rows: 400, pitch: 1, views: 4, R: 100, D: 150 });
    const grid: VolumeGrid = { nx: 8, ny: 8, nz: 8, dx: 1, dy: 1, dz: 1, cx: 0, cy: 0, cz: 0 };
    await expect(Projector3d.create(ws, grid, g)).rejects.toThrow(/lean up to 5\d\.\d degrees/);
  });
});

describe('3D adjoint', () => {
  // Dot-product test: <A x, y> = <x, A^T y> (definition of the adjoint), with an off-centre,
  // anisotropic odd-sized grid, an offset detector and the adjoint's z planes split over workers.
  it.each([1, 3])('<Ax, y> = <x, A^T y> to 1e-5 relative (%i worker parts)', async (parts) => {
    const ws = await localWorkspace(parts);
    const g = cone({ channels: 53, rows: 29, pitch: 1.8, views: 13, spanDeg: 220, R: 220, D: 400, offset: [6, -4] });
    const grid: VolumeGrid = { nx: 37, ny: 41, nz: 29, dx: 1.7, dy: 1.9, dz: 1.3, cx: 3, cy: -5, cz: 2 };
    const proj = await Projector3d.create(ws, grid, g);
    const rand = seededRandom(11);
    const x = Float32Array.from({ length: 37 * 41 * 29 }, () => rand());
    const y = Float32Array.from({ length: proj.projectionLength }, () => rand());
    const [xb, yb, axb, atyb] = [ws.alloc('x', x.length), ws.alloc('y', y.length), ws.alloc('ax', y.length), ws.alloc('aty', x.length)];
    await ws.write(xb, x);
    await ws.write(yb, y);
    await proj.forward(xb, axb);
    await proj.adjoint(yb, atyb);
    const ax = await ws.read(axb);
    const aty = await ws.read(atyb);
    let lhs = 0, rhs = 0;
    for (let i = 0; i < y.length; i++) lhs += ax[i] * y[i];
    for (let i = 0; i < x.length; i++) rhs += x[i] * aty[i];
    expect(lhs).toBeGreaterThan(0);
    expect(Math.abs(lhs - rhs) / Math.abs(lhs)).toBeLessThan(1e-5);
  });

  it('adjoint over a view range equals the sum of its parts', async () => {
    const ws = await localWorkspace(2);
    const g = cone({ channels: 30, rows: 12, pitch: 2, views: 10, R: 200, D: 380 });
    const grid: VolumeGrid = { nx: 20, ny: 22, nz: 9, dx: 2, dy: 2, dz: 2, cx: 0, cy: 0, cz: 0 };
    const proj = await Projector3d.create(ws, grid, g);
    const rand = seededRandom(5);
    const y = Float32Array.from({ length: proj.projectionLength }, () => rand());
    const yb = ws.alloc('y', y.length);
    const [all, a, b] = [ws.alloc('all', 20 * 22 * 9), ws.alloc('a', 20 * 22 * 9), ws.alloc('b', 20 * 22 * 9)];
    await ws.write(yb, y);
    await proj.adjoint(yb, all);
    await proj.adjoint(yb, a, 0, 4);
    await proj.adjoint(yb, b, 4, 10);
    const [va, vb, vall] = [await ws.read(a), await ws.read(b), await ws.read(all)];
    let worst = 0;
    for (let i = 0; i < vall.length; i++) worst = Math.max(worst, Math.abs(va[i] + vb[i] - vall[i]));
    expect(Math.max(...vall)).toBeGreaterThan(1);
    expect(worst).toBeLessThan(1e-4);
  });
});

describe('cone-beam geometry conventions', () => {
  // DEVELOPERS.md, "Geometry": source at (R cos b, R sin b, 0), u along (-sin b, cos b, 0), v along +z, detector
  // offsets shift channel and row coordinates. A single voxel off the axis and off the central
  // plane must project onto the cell the geometry predicts (projectPoint), within one cell.
  it('a voxel lands on the detector cell its ray predicts, with offsets in u and v', async () => {
    const ws = await localWorkspace();
    const g = cone({ channels: 90, rows: 70, pitch: 1, views: 12, startDeg: 23, R: 300, D: 540, offset: [7.5, -11] });
    const grid: VolumeGrid = { nx: 40, ny: 40, nz: 30, dx: 1, dy: 1, dz: 1, cx: 0, cy: 0, cz: 0 };
    const vol = new Float32Array(40 * 40 * 30);
    const [i, j, k] = [30, 12, 24]; // centre (10.5, -7.5, 9.5) mm
    vol[(k * 40 + j) * 40 + i] = 1;
    const got = await project(ws, grid, g, vol);
    const views = viewVectors(g);
    const u0 = firstChannelU(g), v0 = firstRowV(g);
    for (let v = 0; v < 12; v++) {
      const at = projectPoint(coneFrame(views, v), [10.5, -7.5, 9.5])!;
      const [kc, rc] = [(at.u - u0) / 1, (at.v - v0) / 1];
      let best = 0;
      for (let n = 1; n < 90 * 70; n++) if (got[v * 6300 + n] > got[v * 6300 + best]) best = n;
      expect(Math.abs((best % 90) - kc), `view ${v} channel`).toBeLessThanOrEqual(1);
      expect(Math.abs(Math.floor(best / 90) - rc), `view ${v} row`).toBeLessThanOrEqual(1);
      expect(got[v * 6300 + best]).toBeGreaterThan(0.1);
    }
    // The view vectors themselves, from the formulas of DEVELOPERS.md, "Geometry" at b = 23 degrees.
    const [c, s] = [Math.cos((23 * Math.PI) / 180), Math.sin((23 * Math.PI) / 180)];
    const design = [300 * c, 300 * s, 0, -240 * c, -240 * s, 0, -s, c, 0, 0, 0, 1];
    design.forEach((x, n) => { expect(views[n]).toBeCloseTo(x, 4); });
  });
});
