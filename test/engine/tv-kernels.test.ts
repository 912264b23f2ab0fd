// Total variation kernels (assembly/tv.ts): known values, the gradient against central finite
// differences of the smoothed weighted TV (calculus), the reweighting formula of Candes, Wakin
// & Boyd 2008, and independence from how rows are split between workers.
import { describe, expect, it } from 'vitest';
import type { LocalWorkspace } from '../../web/core/engine/local-workspace';
import { seededRandom } from '../../web/core/simulate/noise';
import { localWorkspace } from '../helpers/engine';

/** Smoothed weighted TV in f64: sum_p w_p sqrt(dx^2 + dy^2 + delta2), backward differences. */
function tvRef(f: Float64Array, w: Float64Array, nx: number, ny: number, delta2: number): number {
  let s = 0;
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const k = j * nx + i;
      const dx = i > 0 ? f[k] - f[k - 1] : 0;
      const dy = j > 0 ? f[k] - f[k - nx] : 0;
      s += w[k] * Math.sqrt(dx * dx + dy * dy + delta2);
    }
  }
  return s;
}

async function setup(ws: LocalWorkspace, f: Float32Array, w: Float32Array, support?: Float32Array) {
  const n = f.length;
  const bufs = { f: ws.alloc('f', n), w: ws.alloc('w', n), g: ws.alloc('g', n), grad: ws.alloc('grad', n), s: ws.alloc('s', n), rows: ws.alloc('rows', 2 * 4096) };
  await ws.write(bufs.f, f);
  await ws.write(bufs.w, w);
  await ws.write(bufs.s, support ?? new Float32Array(n).fill(1));
  return bufs;
}

/** Runs the parts (in sequence) and adds the f64 row sums they wrote, in row order. */
async function total(ws: LocalWorkspace, rows: { ptr: number; name: string; length: number }, ny: number, parts: Parameters<LocalWorkspace['run']>[0]): Promise<number> {
  for (const p of parts) await ws.run([p]);
  const v = new Float64Array((await ws.read(rows, 0, 2 * ny)).buffer);
  return v.reduce((s, x) => s + x, 0);
}

describe('TV kernels', () => {
  it('TV of a linear ramp: (nx-1)(ny-1)|(a,b)| + (nx-1)|a| + (ny-1)|b| exactly (backward differences)', async () => {
    // f = a i + b j: every pixel past the first row and column has gradient (a, b); the first
    // row only dx = a, the first column only dy = b, the corner nothing (derived here).
    const ws = await localWorkspace();
    const nx = 37, ny = 21, a = 0.003, b = -0.004;
    const f = Float32Array.from({ length: nx * ny }, (_, k) => a * (k % nx) + b * Math.floor(k / nx));
    const bufs = await setup(ws, f, new Float32Array(nx * ny).fill(1));
    const tv = await total(ws, bufs.rows, ny, [{ kernel: 'tvScale', args: [bufs.f, bufs.w, bufs.g, nx, ny, 0, ny, 0, bufs.rows] }]);
    const expected = (nx - 1) * (ny - 1) * Math.hypot(a, b) + (nx - 1) * Math.abs(a) + (ny - 1) * Math.abs(b);
    expect(Math.abs(tv - expected) / expected).toBeLessThan(1e-4);
  });

  it('TV of a vertical step edge of height h over ny rows is ny * h', async () => {
    const ws = await localWorkspace();
    const nx = 19, ny = 11, h = 0.02;
    const f = Float32Array.from({ length: nx * ny }, (_, k) => (k % nx >= 7 ? h : 0));
    const bufs = await setup(ws, f, new Float32Array(nx * ny).fill(1));
    const tv = await total(ws, bufs.rows, ny, [{ kernel: 'tvScale', args: [bufs.f, bufs.w, bufs.g, nx, ny, 0, ny, 0, bufs.rows] }]);
    expect(tv).toBeCloseTo(ny * h, 6);
  });

  it('gradient matches central differences of the smoothed weighted TV, support applied', async () => {
    const ws = await localWorkspace();
    const nx = 13, ny = 10, delta2 = 1e-2;
    const rand = seededRandom(11);
    const f = Float32Array.from({ length: nx * ny }, () => rand());
    const w = Float32Array.from({ length: nx * ny }, () => 0.5 + rand());
    const support = Float32Array.from({ length: nx * ny }, (_, k) => (k % 17 === 3 ? 0 : 1));
    const bufs = await setup(ws, f, w, support);
    await ws.run([{ kernel: 'tvScale', args: [bufs.f, bufs.w, bufs.g, nx, ny, 0, ny, delta2, bufs.rows] }]);
    const sq = await total(ws, bufs.rows, ny, [{ kernel: 'tvGradient', args: [bufs.f, bufs.g, bufs.s, bufs.grad, nx, ny, 0, ny, bufs.rows] }]);
    const grad = await ws.read(bufs.grad);
    const f64 = Float64Array.from(f), w64 = Float64Array.from(w);
    const h = 1e-6;
    let sumSq = 0;
    // Every pixel: corners, edges and interior, SIMD body and scalar tails.
    for (let k = 0; k < nx * ny; k++) {
      const up = Float64Array.from(f64), down = Float64Array.from(f64);
      up[k] += h;
      down[k] -= h;
      const numeric = (support[k] * (tvRef(up, w64, nx, ny, delta2) - tvRef(down, w64, nx, ny, delta2))) / (2 * h);
      expect(Math.abs(grad[k] - numeric)).toBeLessThan(2e-4 * (1 + Math.abs(numeric)));
      sumSq += grad[k] * grad[k];
    }
    expect(Math.abs(sq - sumSq) / sumSq).toBeLessThan(1e-5);
  });

  it('reweighting: w = 1 / (|grad f| + eps)', async () => {
    const ws = await localWorkspace();
    const nx = 11, ny = 6, eps = 0.01;
    const rand = seededRandom(12);
    const f = Float32Array.from({ length: nx * ny }, () => rand());
    const bufs = await setup(ws, f, new Float32Array(nx * ny));
    await ws.run([{ kernel: 'tvWeights', args: [bufs.f, bufs.w, nx, ny, 0, ny, eps] }]);
    const w = await ws.read(bufs.w);
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        const k = j * nx + i;
        const m = Math.hypot(i > 0 ? f[k] - f[k - 1] : 0, j > 0 ? f[k] - f[k - nx] : 0);
        expect(w[k]).toBeCloseTo(1 / (m + eps), 3);
      }
    }
  });

  it('splitting the rows between parts changes nothing', async () => {
    const ws = await localWorkspace();
    const nx = 29, ny = 17, delta2 = 1e-6;
    const rand = seededRandom(13);
    const f = Float32Array.from({ length: nx * ny }, () => rand());
    const bufs = await setup(ws, f, new Float32Array(nx * ny).fill(1));
    const tAll = await total(ws, bufs.rows, ny, [{ kernel: 'tvScale', args: [bufs.f, bufs.w, bufs.g, nx, ny, 0, ny, delta2, bufs.rows] }]);
    await ws.run([{ kernel: 'tvGradient', args: [bufs.f, bufs.g, bufs.s, bufs.grad, nx, ny, 0, ny, bufs.rows] }]);
    const whole = await ws.read(bufs.grad);
    const wholeRows = await ws.read(bufs.rows, 0, 2 * ny);
    await ws.write(bufs.rows, new Float32Array(2 * ny));
    const tSplit = await total(ws, bufs.rows, ny, [
      { kernel: 'tvScale', args: [bufs.f, bufs.w, bufs.g, nx, ny, 6, ny, delta2, bufs.rows] },
      { kernel: 'tvScale', args: [bufs.f, bufs.w, bufs.g, nx, ny, 0, 6, delta2, bufs.rows] },
    ]);
    await ws.write(bufs.grad, new Float32Array(nx * ny));
    await ws.run([{ kernel: 'tvGradient', args: [bufs.f, bufs.g, bufs.s, bufs.grad, nx, ny, 6, ny, bufs.rows] }]);
    await ws.run([{ kernel: 'tvGradient', args: [bufs.f, bufs.g, bufs.s, bufs.grad, nx, ny, 0, 6, bufs.rows] }]);
    expect(Array.from(await ws.read(bufs.grad))).toEqual(Array.from(whole));
    expect(Array.from(await ws.read(bufs.rows, 0, 2 * ny))).toEqual(Array.from(wholeRows));
    expect(tSplit).toBe(tAll);
  });
});
