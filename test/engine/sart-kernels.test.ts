// The elementwise SART kernels (assembly/sart.ts) against plain TypeScript transcriptions of the
// SART update of A. H. Andersen, A. C. Kak, Ultrasonic Imaging 6:81-94, 1984 (REFERENCES.md
// [andersen-kak-1984]), on random data with lengths that exercise the SIMD tails.
import { describe, expect, it } from 'vitest';
import type { LocalWorkspace } from '../../web/core/engine/local-workspace';
import { seededRandom } from '../../web/core/simulate/noise';
import { localWorkspace } from '../helpers/engine';

function randomArray(n: number, seed: number, lo = -1, hi = 1): Float32Array {
  const r = seededRandom(seed);
  return Float32Array.from({ length: n }, () => lo + (hi - lo) * r());
}

async function put(ws: LocalWorkspace, name: string, data: Float32Array) {
  const b = ws.alloc(name, data.length);
  await ws.write(b, data);
  return b;
}

describe('SART kernels', () => {
  it('sartWeights: num / sum where sum > minSum, else 0', async () => {
    const ws = await localWorkspace();
    const sum = Float32Array.from([2, 0, 0.05, -1, 4, 8, 0.1, 1e-7, 3, 0.5, 10]);
    const num = Float32Array.from([1, 5, 1, 1, 2, 1, 0, 1, 3, 1, 5]);
    const s = await put(ws, 'sum', sum), n = await put(ws, 'num', num), out = ws.alloc('out', sum.length);
    // Elements [1, 10): the range start and end are not multiples of four.
    await ws.write(out, new Float32Array(sum.length).fill(-9));
    await ws.run([{ kernel: 'sartWeights', args: [s, n, out, 1, 10, 0.1] }]);
    const got = await ws.read(out);
    expect(Array.from(got)).toEqual([-9, 0, 0, 0, 0.5, 0.125, 0, 0, 1, 2, -9]);
  });

  it('sartCorrection: c = (target - Ax) * w and each view\'s squared residual over the measured channels', async () => {
    const ws = await localWorkspace();
    const nCh = 23, nViews = 7, k0 = 5, k1 = 18, v0 = 2, v1 = 6;
    const ax = randomArray(nCh * nViews, 1), target = randomArray(nCh * nViews, 2), w = randomArray(nCh * nViews, 3, 0, 2);
    const c = await put(ws, 'c', ax), t = await put(ws, 't', target), wb = await put(ws, 'w', w);
    const sums = await put(ws, 'sums', new Float32Array(2 * nViews));
    await ws.run([{ kernel: 'sartCorrection', args: [c, t, wb, nCh, v0, v1, k0, k1, sums] }]);
    const got = await ws.read(c);
    const perView = new Float64Array((await ws.read(sums)).buffer);
    for (let v = 0; v < nViews; v++) {
      let expected = 0;
      for (let k = 0; k < nCh; k++) {
        const i = v * nCh + k;
        const inside = v >= v0 && v < v1;
        expect(got[i]).toBeCloseTo(inside ? (target[i] - ax[i]) * w[i] : ax[i], 6);
        if (inside && k >= k0 && k < k1) expected += (target[i] - ax[i]) ** 2;
      }
      expect(perView[v]).toBeCloseTo(expected, 5);
    }
  });

  it('sartUpdate: x = max(floor, x + lambda * pixelWeight * back)', async () => {
    const ws = await localWorkspace();
    const n = 37;
    const x = randomArray(n, 4), back = randomArray(n, 5), pw = randomArray(n, 6, 0, 3);
    const xb = await put(ws, 'x', x), bb = await put(ws, 'b', back), pb = await put(ws, 'p', pw);
    await ws.run([{ kernel: 'sartUpdate', args: [xb, bb, pb, 3, 34, 0.7, 0] }]);
    const got = await ws.read(xb);
    for (let i = 0; i < n; i++) {
      const want = i >= 3 && i < 34 ? Math.max(0, x[i] + 0.7 * pw[i] * back[i]) : x[i];
      expect(got[i]).toBeCloseTo(want, 6);
    }
    await ws.write(xb, x);
    await ws.run([{ kernel: 'sartUpdate', args: [xb, bb, pb, 0, n, 1, -3.4e38] }]);
    const free = await ws.read(xb);
    expect(free.some((v) => v < 0)).toBe(true);
  });

  it('squaredDistances (per line) and copyRange', async () => {
    const ws = await localWorkspace();
    const lineLength = 1001, lines = 5, n = lineLength * lines;
    const a = randomArray(n, 7), b = randomArray(n, 8);
    const ab = await put(ws, 'a', a), bb = await put(ws, 'b', b);
    const sums = await put(ws, 'sums', new Float32Array(2 * lines));
    await ws.run([{ kernel: 'squaredDistances', args: [ab, bb, lineLength, 1, 4, sums] }]);
    const got64 = new Float64Array((await ws.read(sums)).buffer);
    for (let l = 0; l < lines; l++) {
      let expected = 0;
      for (let i = l * lineLength; i < (l + 1) * lineLength; i++) expected += (a[i] - b[i]) ** 2;
      if (l >= 1 && l < 4) expect(Math.abs(got64[l] - expected) / expected).toBeLessThan(1e-6);
      else expect(got64[l]).toBe(0);
    }
    await ws.run([{ kernel: 'copyRange', args: [ab, bb, 10, 4000] }]);
    const got = await ws.read(ab);
    expect(Array.from(got.subarray(10, 4000))).toEqual(Array.from(b.subarray(10, 4000)));
    expect(got[9]).toBe(a[9]);
    expect(got[4000]).toBe(a[4000]);
  });
});
