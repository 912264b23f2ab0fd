// Total variation kernels for volumes (assembly/tv3d.ts): known values, the gradient against
// central finite differences of the smoothed weighted TV (calculus), the reweighting formula of
// Candes, Wakin & Boyd 2008, and independence from how lines are split between workers.
import { describe, expect, it } from 'vitest';
import type { LocalWorkspace } from '../../web/core/engine/local-workspace';
import type { Part } from '../../web/core/engine/workspace';
import { seededRandom } from '../../web/core/simulate/noise';
import { localWorkspace } from '../helpers/engine';

/** Backward differences at voxel (i, j, k) of f (0 across the first column / row / slice). */
function diffs(f: ArrayLike<number>, nx: number, ny: number, i: number, j: number, k: number): [number, number, number] {
  const p = (k * ny + j) * nx + i;
  return [i > 0 ? f[p] - f[p - 1] : 0, j > 0 ? f[p] - f[p - nx] : 0, k > 0 ? f[p] - f[p - nx * ny] : 0];
}

/** Smoothed weighted TV in f64: sum_p w_p sqrt(dx^2 + dy^2 + dz^2 + delta2). */
function tvRef(f: Float64Array, w: Float64Array, nx: number, ny: number, nz: number, delta2: number): number {
  let s = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        const [dx, dy, dz] = diffs(f, nx, ny, i, j, k);
        s += w[(k * ny + j) * nx + i] * Math.sqrt(dx * dx + dy * dy + dz * dz + delta2);
      }
    }
  }
  return s;
}

async function setup(ws: LocalWorkspace, f: Float32Array, w: Float32Array, lines: number, support?: Float32Array) {
  const n = f.length;
  const b = { f: ws.alloc('f', n), w: ws.alloc('w', n), g: ws.alloc('g', n), grad: ws.alloc('grad', n), s: ws.alloc('s', n), sums: ws.alloc('sums', 2 * lines) };
  await ws.write(b.f, f);
  await ws.write(b.w, w);
  await ws.write(b.s, support ?? new Float32Array(n).fill(1));
  return b;
}

/** Runs each part in turn and adds the f64 line sums, in line order. */
async function total(ws: LocalWorkspace, sums: { ptr: number; name: string; length: number }, lines: number, parts: Part[]): Promise<number> {
  for (const p of parts) await ws.run([p]);
  const v = new Float64Array((await ws.read(sums, 0, 2 * lines)).buffer);
  return v.reduce((s, x) => s + x, 0);
}

describe('3D TV kernels', () => {
  it('TV of a linear ramp: the count of voxels with each set of backward differences (derived here)', async () => {
    // f = a i + b j + c k: interior voxels have gradient (a, b, c); on the first slice only
    // (a, b), and so on down to the corner, which has none.
    const ws = await localWorkspace();
    const [nx, ny, nz, a, b, c] = [13, 9, 6, 0.003, -0.004, 0.0025];
    const f = Float32Array.from({ length: nx * ny * nz }, (_, p) => a * (p % nx) + b * (Math.floor(p / nx) % ny) + c * Math.floor(p / (nx * ny)));
    const bufs = await setup(ws, f, new Float32Array(f.length).fill(1), ny * nz);
    const tv = await total(ws, bufs.sums, ny * nz, [{ kernel: 'tv3Scale', args: [bufs.f, bufs.w, bufs.g, nx, ny, nz, 0, ny * nz, 0, bufs.sums] }]);
    const [X, Y, Z] = [nx - 1, ny - 1, nz - 1];
    const expected = X * Y * Z * Math.hypot(a, b, c) + X * Y * Math.hypot(a, b) + X * Z * Math.hypot(a, c) + Y * Z * Math.hypot(b, c)
      + X * Math.abs(a) + Y * Math.abs(b) + Z * Math.abs(c);
    expect(Math.abs(tv - expected) / expected).toBeLessThan(1e-4);
  });

  it('TV of a step of height h across z is nx ny h', async () => {
    const ws = await localWorkspace();
    const [nx, ny, nz, h] = [11, 7, 8, 0.02];
    const f = Float32Array.from({ length: nx * ny * nz }, (_, p) => (Math.floor(p / (nx * ny)) >= 5 ? h : 0));
    const bufs = await setup(ws, f, new Float32Array(f.length).fill(1), ny * nz);
    const tv = await total(ws, bufs.sums, ny * nz, [{ kernel: 'tv3Scale', args: [bufs.f, bufs.w, bufs.g, nx, ny, nz, 0, ny * nz, 0, bufs.sums] }]);
    expect(tv).toBeCloseTo(nx * ny * h, 6);
  });

  it('gradient matches central differences of the smoothed weighted TV, support applied; weights follow 1 / (|grad f| + eps)', async () => {
    const ws = await localWorkspace();
    const [nx, ny, nz, delta2] = [9, 6, 5, 1e-2];
    const n = nx * ny * nz, lines = ny * nz;
    const rand = seededRandom(17);
    const f = Float32Array.from({ length: n }, () => rand());
    const w = Float32Array.from({ length: n }, () => 0.5 + rand());
    const support = Float32Array.from({ length: n }, (_, p) => (p % 23 === 4 ? 0 : 1));
    const bufs = await setup(ws, f, w, lines, support);
    await ws.run([{ kernel: 'tv3Scale', args: [bufs.f, bufs.w, bufs.g, nx, ny, nz, 0, lines, delta2, bufs.sums] }]);
    const sq = await total(ws, bufs.sums, lines, [{ kernel: 'tv3Gradient', args: [bufs.f, bufs.g, bufs.s, bufs.grad, nx, ny, nz, 0, lines, bufs.sums] }]);
    const grad = await ws.read(bufs.grad);
    const f64 = Float64Array.from(f), w64 = Float64Array.from(w);
    const h = 1e-6;
    let sumSq = 0, worst = 0;
    // Every voxel: corners, edges, faces and interior, SIMD body and scalar tails.
    for (let p = 0; p < n; p++) {
      const up = Float64Array.from(f64), down = Float64Array.from(f64);
      up[p] += h;
      down[p] -= h;
      const numeric = (support[p] * (tvRef(up, w64, nx, ny, nz, delta2) - tvRef(down, w64, nx, ny, nz, delta2))) / (2 * h);
      worst = Math.max(worst, Math.abs(grad[p] - numeric) / Math.max(1, Math.abs(numeric)));
      sumSq += grad[p] * grad[p];
    }
    expect(worst).toBeLessThan(2e-4);
    expect(Math.abs(sq - sumSq) / sumSq).toBeLessThan(1e-5);
    // Reweighting: w = 1 / (sqrt(dx^2 + dy^2 + dz^2) + eps).
    const eps = 0.05;
    await ws.run([{ kernel: 'tv3Weights', args: [bufs.f, bufs.w, nx, ny, nz, 0, lines, eps] }]);
    const weights = await ws.read(bufs.w);
    for (let p = 0; p < n; p++) {
      const [dx, dy, dz] = diffs(f, nx, ny, p % nx, Math.floor(p / nx) % ny, Math.floor(p / (nx * ny)));
      expect(weights[p]).toBeCloseTo(1 / (Math.hypot(dx, dy, dz) + eps), 4);
    }
  });

  it('does not depend on how the lines are split between workers', async () => {
    const [nx, ny, nz] = [17, 7, 6];
    const n = nx * ny * nz, lines = ny * nz;
    const rand = seededRandom(5);
    const f = Float32Array.from({ length: n }, () => rand());
    const w = Float32Array.from({ length: n }, () => 0.5 + rand());
    const run = async (bands: Array<[number, number]>) => {
      const ws = await localWorkspace();
      const b = await setup(ws, f, w, lines);
      const tv = await total(ws, b.sums, lines, bands.map(([l0, l1]) => ({ kernel: 'tv3Scale' as const, args: [b.f, b.w, b.g, nx, ny, nz, l0, l1, 1e-4, b.sums] })));
      const sq = await total(ws, b.sums, lines, bands.map(([l0, l1]) => ({ kernel: 'tv3Gradient' as const, args: [b.f, b.g, b.s, b.grad, nx, ny, nz, l0, l1, b.sums] })));
      for (const [l0, l1] of bands) await ws.run([{ kernel: 'tv3Weights', args: [b.f, b.w, nx, ny, nz, l0, l1, 0.01] }]);
      return { tv, sq, grad: await ws.read(b.grad), w: await ws.read(b.w) };
    };
    const one = await run([[0, lines]]);
    // Bands that end mid-slice and mid-volume.
    const split = await run([[0, 5], [5, 19], [19, lines]]);
    expect(split.tv).toBe(one.tv);
    expect(split.sq).toBe(one.sq);
    expect(Array.from(split.grad)).toEqual(Array.from(one.grad));
    expect(Array.from(split.w)).toEqual(Array.from(one.w));
  });
});
