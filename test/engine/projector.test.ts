import { describe, expect, it } from 'vitest';
import type { Geometry } from '../../web/core/geometry/types';
import { firstChannelU, kernelKind, rayAt, viewVectors } from '../../web/core/geometry/view-vectors';
import { squareGrid } from '../../web/core/image';
import { lineIntegral, rasterize } from '../../web/core/phantoms/ellipse';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { Projector2d } from '../../web/core/recon/projector';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { seededRandom } from '../../web/core/simulate/noise';
import { fanCurved, fanFlat, parallel } from '../helpers/geometries';
import { localWorkspace } from '../helpers/engine';

const geometries: Array<[string, Geometry]> = [
  ['parallel', parallel(256, 1, 90)],
  ['fan flat', fanFlat(384, 1, 90)],
  ['fan curved', fanCurved(384, 1, 90)],
];

describe('Joseph forward projector', () => {
  // Kak & Slaney ch. 3.1: the projection of a uniform ellipse is (2 rho A B / a^2) sqrt(a^2 - t^2).
  it.each(geometries)('%s: matches analytic ellipse line integrals within 1%% away from edges', async (_, g) => {
    const ws = await localWorkspace(2);
    const grid = squareGrid(512, 0.4);
    const p = { name: 'e', muWater: 0.02, radius: 80, ellipses: [{ cx: 12, cy: -8, a: 70, b: 45, phiDeg: 30, value: 0.02 }] };
    const img = rasterize(p, grid, 8);
    const proj = await Projector2d.create(ws, grid, g);
    const imgBuf = ws.alloc('img', img.length);
    const sino = ws.alloc('sino', proj.nViews * proj.nCh);
    await ws.write(imgBuf, img);
    await proj.forward(imgBuf, sino);
    const got = await ws.read(sino);
    const exact = analyticSinogram(p, g);
    // "Away from its edges": the rays 5 mm (at the isocentre) either side also cross the
    // ellipse; the projection's square-root edge is where the pixel grid shows.
    const views = viewVectors(g);
    const mag = g.kind === 'fan' ? g.sourceDetector! / g.sourceIsocenter! : 1;
    const m = Math.ceil((5 * mag) / g.detector.pitch[0]);
    let checked = 0, worst = 0;
    for (let v = 0; v < proj.nViews; v++) {
      for (let k = m; k < proj.nCh - m; k++) {
        const e = exact[v * proj.nCh + k];
        if (exact[v * proj.nCh + k - m] === 0 || exact[v * proj.nCh + k + m] === 0) continue;
        checked++;
        worst = Math.max(worst, Math.abs(got[v * proj.nCh + k] - e) / e);
      }
    }
    expect(checked).toBeGreaterThan(5000);
    expect(worst).toBeLessThan(0.01);
    expect(views.length).toBeGreaterThan(0);
  });

  it('parallel projection of Shepp-Logan matches the tabulated values (REFERENCES.md [ellipse-projection])', async () => {
    // P_0(0) = 1.974260, P_90(0) = 1.450712 for the original phantom on [-1,1]^2 (table units).
    const ws = await localWorkspace();
    const g = { ...parallel(201, 1, 2, 180) };
    const scale = 100;
    const p = sheppLogan('original', scale, 1);
    const grid = squareGrid(400, 0.5);
    const img = rasterize(p, grid, 8);
    const proj = await Projector2d.create(ws, grid, g);
    const imgBuf = ws.alloc('img', img.length);
    const sino = ws.alloc('sino', proj.nViews * proj.nCh);
    await ws.write(imgBuf, img);
    await proj.forward(imgBuf, sino);
    const got = await ws.read(sino);
    // Channel 100 is the centre ray. Line integral in mm -> table units: divide by the scale.
    // Our view b has rays along -(cos b, sin b), so it is the table's theta = b + 90 degrees.
    expect(Math.abs(got[100] / scale - 1.450712) / 1.450712).toBeLessThan(0.01);
    expect(Math.abs(got[201 + 100] / scale - 1.97426) / 1.97426).toBeLessThan(0.01);
  });
});

describe('adjoint', () => {
  // Dot-product test: <A x, y> = <x, A^T y> (definition of the adjoint operator).
  it.each(geometries)('%s: <Ax, y> = <x, A^T y> to 1e-5 relative', async (_, g) => {
    const ws = await localWorkspace(2);
    const grid = { nx: 97, ny: 83, dx: 1.7, dy: 1.9, cx: 3, cy: -5 };
    const proj = await Projector2d.create(ws, grid, g);
    const rand = seededRandom(7);
    const x = Float32Array.from({ length: grid.nx * grid.ny }, () => rand());
    const y = Float32Array.from({ length: proj.nViews * proj.nCh }, () => rand());
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
    expect(Math.abs(lhs - rhs) / Math.abs(lhs)).toBeLessThan(1e-5);
    expect(lhs).toBeGreaterThan(0);
  });
});

describe('geometry conventions', () => {
  // DEVELOPERS.md, "Geometry": source at (R cos b, R sin b), u along (-sin b, cos b); a point object at (x, y)
  // projects to the channel whose ray passes through it, in every geometry.
  it.each(geometries)('%s: an off-centre point lands on the channel its ray predicts', async (_, g) => {
    const ws = await localWorkspace();
    const grid = squareGrid(128, 1);
    const img = new Float32Array(128 * 128);
    const [i, j] = [90, 40]; // pixel centre x = 90 - 63.5 = 26.5, y = 40 - 63.5 = -23.5
    img[j * 128 + i] = 1;
    const proj = await Projector2d.create(ws, grid, g);
    const xb = ws.alloc('x', img.length);
    const sb = ws.alloc('s', proj.nViews * proj.nCh);
    await ws.write(xb, img);
    await proj.forward(xb, sb);
    const sino = await ws.read(sb);
    const views = viewVectors(g);
    const kind = kernelKind(g);
    const u0 = firstChannelU(g);
    const pitch = g.detector.pitch[0];
    const [px, py] = [26.5, -23.5];
    for (const v of [0, 17, 45, 71]) {
      // Find the channel whose ray passes closest to the point, from the geometry alone.
      let best = -1, bestD = Infinity;
      for (let k = 0; k < proj.nCh; k++) {
        const r = rayAt(views, v, kind, u0 + k * pitch);
        const d = Math.abs((px - r.px) * r.dy - (py - r.py) * r.dx);
        if (d < bestD) [bestD, best] = [d, k];
      }
      const row = sino.subarray(v * proj.nCh, (v + 1) * proj.nCh);
      let peak = 0;
      for (let k = 1; k < row.length; k++) if (row[k] > row[peak]) peak = k;
      expect(Math.abs(peak - best)).toBeLessThanOrEqual(1);
      expect(row[peak]).toBeGreaterThan(0);
    }
    // Sanity of the conventions themselves: at b = 0 a fan source sits on +x.
    if (g.kind === 'fan') expect(views[0]).toBeCloseTo(g.sourceIsocenter!, 3);
    const r0 = rayAt(views, 0, kind, 0);
    expect(Math.abs(r0.dy)).toBeLessThan(1e-6);
    expect(lineIntegral({ name: '', muWater: 0, radius: 0, ellipses: [] }, 0, 0, 1, 0)).toBe(0);
  });
});

describe('Joseph kernel against a scalar reference of the same method', () => {
  // Joseph 1982, written out plainly in test/helpers/joseph-reference.ts. Random images with
  // bright edge rows and columns check the kernel's padding and index arithmetic at the borders.
  it.each(geometries)('%s: every ray within 1e-4 of the reference (relative to the largest)', async (_, g) => {
    const { josephReference } = await import('../helpers/joseph-reference');
    const ws = await localWorkspace(2);
    const grid = { nx: 61, ny: 47, dx: 2.1, dy: 1.7, cx: -4, cy: 6 };
    const rand = seededRandom(11);
    const img = Float32Array.from({ length: grid.nx * grid.ny }, (_, k) => {
      const i = k % grid.nx, j = Math.floor(k / grid.nx);
      return i === 0 || j === 0 || i === grid.nx - 1 || j === grid.ny - 1 ? 5 + rand() : rand();
    });
    const proj = await Projector2d.create(ws, grid, g);
    const xb = ws.alloc('x', img.length), sb = ws.alloc('s', proj.nViews * proj.nCh);
    await ws.write(xb, img);
    await proj.forward(xb, sb);
    const got = await ws.read(sb);
    const want = josephReference(img, grid, g);
    let worst = 0, top = 0;
    for (let i = 0; i < want.length; i++) {
      worst = Math.max(worst, Math.abs(got[i] - want[i]));
      top = Math.max(top, Math.abs(want[i]));
    }
    expect(top).toBeGreaterThan(0);
    expect(worst / top).toBeLessThan(1e-4);
  });
});
