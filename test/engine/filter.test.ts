import { describe, expect, it } from 'vitest';
import { applyWindow, paddedLength, rampKernel, windowGain, type FilterWindow } from '../../web/core/recon/filter-design';
import { localWorkspace } from '../helpers/engine';

async function response(kernel: Float32Array): Promise<Float32Array> {
  const ws = await localWorkspace();
  const n = kernel.length;
  const [tr, ti, br, k, out, re, im] = ['twRe', 'twIm', 'bitrev', 'k', 'out', 're', 'im'].map((s) => ws.alloc(s, n));
  await ws.run([{ kernel: 'fftPrepare', args: [n, tr, ti, br] }]);
  await ws.write(k, kernel);
  await ws.run([{ kernel: 'realEvenResponse', args: [k, n, out, tr, ti, br, re, im] }]);
  return ws.read(out);
}

describe('FFT', () => {
  it('matches a direct DFT on random complex data (definition of the DFT)', async () => {
    const ws = await localWorkspace();
    const n = 64;
    const [tr, ti, br, re, im] = ['twRe', 'twIm', 'bitrev', 're', 'im'].map((s) => ws.alloc(s, n));
    await ws.run([{ kernel: 'fftPrepare', args: [n, tr, ti, br] }]);
    const xr = Float32Array.from({ length: n }, (_, i) => Math.sin(i * 1.3) + 0.2 * i / n);
    const xi = Float32Array.from({ length: n }, (_, i) => Math.cos(i * 0.7));
    await ws.write(re, xr);
    await ws.write(im, xi);
    await ws.run([{ kernel: 'fft', args: [re, im, n, tr, ti, br] }]);
    const [yr, yi] = [await ws.read(re), await ws.read(im)];
    for (let k = 0; k < n; k++) {
      let sr = 0, si = 0;
      for (let t = 0; t < n; t++) {
        const a = (-2 * Math.PI * k * t) / n;
        sr += xr[t] * Math.cos(a) - xi[t] * Math.sin(a);
        si += xr[t] * Math.sin(a) + xi[t] * Math.cos(a);
      }
      expect(yr[k]).toBeCloseTo(sr, 3);
      expect(yi[k]).toBeCloseTo(si, 3);
    }
  });
});

describe('ramp filter', () => {
  it('spatial kernel has the Kak & Slaney eq. 61 values (REFERENCES.md [ramp-kernel])', () => {
    const k = rampKernel(16, 1);
    expect(k[0]).toBeCloseTo(0.25, 7);
    expect(k[1]).toBeCloseTo(-0.10132118, 7);
    expect(k[2]).toBe(0);
    expect(k[3]).toBeCloseTo(-0.01125791, 7);
    expect(k[5]).toBeCloseTo(-0.00405285, 7);
    expect(k[15]).toBeCloseTo(-0.10132118, 7);
  });

  // REFERENCES.md [ramp-kernel]: response of the N-point circular kernel [D]: DC, Nyquist, N/4.
  it.each([
    [64, 3.165e-3, 0.496835],
    [256, 7.916e-4, 0.499208],
    [1024, 1.979e-4, 0.499802],
  ])('N=%i: DC %f (not zero: no DC offset), Nyquist %f, 0.25 at N/4', async (n, dc, nyq) => {
    const h = await response(rampKernel(n, 1));
    expect(h[0]).toBeCloseTo(dc, 6);
    expect(h[n / 2]).toBeCloseTo(nyq, 5);
    expect(h[n / 4]).toBeCloseTo(0.25, 5);
    expect(h[n / 8]).toBeGreaterThan(0.12);
  });

  it('padded length is the next power of two >= 2N-1 (Kak & Slaney ch. 3: avoid interperiod interference)', () => {
    expect(paddedLength(512)).toBe(1024);
    expect(paddedLength(513)).toBe(2048);
    expect(paddedLength(3)).toBe(8);
  });

  // REFERENCES.md [filter-windows] table: H = |f| W(f) at f/f_N = 0, .25, .5, .75, 1 (tau = 1, f_N = 0.5).
  it.each<[FilterWindow, number[]]>([
    ['ram-lak', [0, 0.125, 0.25, 0.375, 0.5]],
    ['shepp-logan', [0, 0.121812, 0.225079, 0.29408, 0.31831]],
    ['cosine', [0, 0.115485, 0.176777, 0.143506, 0]],
    ['hamming', [0, 0.108159, 0.135, 0.080524, 0.04]],
    ['hann', [0, 0.106694, 0.125, 0.054917, 0]],
  ])('%s window matches the tabulated |f| W(f)', (w, expected) => {
    [0, 0.25, 0.5, 0.75, 1].forEach((r, i) => { expect(0.5 * r * windowGain(w, r)).toBeCloseTo(expected[i], 5); });
  });

  it('windows apply symmetrically in FFT order', () => {
    const h = applyWindow(new Float32Array(8).fill(1), 'hann');
    expect(h[0]).toBe(1);
    expect(h[4]).toBeCloseTo(0, 7);
    expect(h[1]).toBeCloseTo(h[7], 7);
    expect(h[2]).toBeCloseTo(0.5, 7);
  });
});
