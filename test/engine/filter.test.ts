import { describe, expect, it } from 'vitest';
import { applyWindow, FILTER_WINDOWS, paddedLength, rampKernel, windowGain, type FilterWindow } from '../../web/core/recon/filter-design';
import { bandEdge, isocentreSampling, nyquistLpPerCm, prepareFilter } from '../../web/core/recon/filter-response';
import { validateGeometry } from '../../web/core/geometry/validate';
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
    ['ramp', [0, 0.125, 0.25, 0.375, 0.5]],
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

  it('the windows are listed from the sharpest to the smoothest', () => {
    // For white noise in the projections, the variance of the FBP image is proportional to the
    // integral of |H(f)|^2 = f^2 W(f)^2 over the band (Kak & Slaney 1988, ch. 5.2): each window
    // in the list passes less noise than the one before, and its gain falls to one half no later.
    const n = 20000;
    const noise = (w: FilterWindow) => {
      let acc = 0;
      for (let i = 0; i < n; i++) {
        const r = (i + 0.5) / n;
        acc += r * r * windowGain(w, r) ** 2;
      }
      return acc / n;
    };
    const half = (w: FilterWindow) => {
      for (let i = 0; i <= n; i++) if (windowGain(w, i / n) < 0.5) return i / n;
      return 1;
    };
    expect(FILTER_WINDOWS[0]).toBe('ramp');
    expect(noise('ramp')).toBeCloseTo(1 / 3, 6); // integral of r^2 over [0, 1]
    for (let k = 1; k < FILTER_WINDOWS.length; k++) {
      expect(noise(FILTER_WINDOWS[k])).toBeLessThan(noise(FILTER_WINDOWS[k - 1]));
      expect(half(FILTER_WINDOWS[k])).toBeLessThanOrEqual(half(FILTER_WINDOWS[k - 1]));
    }
  });
});

describe('band limit in line pairs per cm at the isocentre', () => {
  const detector = { channels: 64, pitch: [1, 1] };
  const fan = validateGeometry({ kind: 'fan', detector, sourceIsocenter: 500, sourceDetector: 1000, anglesDeg: { start: 0, step: 1, count: 360 } });

  it('the Nyquist frequency is 1 / (2 x the ray spacing at the isocentre) (sampling theorem; magnification R/D)', () => {
    expect(isocentreSampling(fan)).toBeCloseTo(0.5, 12); // 1 mm pitch magnified 1000/500
    expect(nyquistLpPerCm(fan)).toBeCloseTo(10, 12); // 1 cycle per mm
    const curved = validateGeometry({ ...fan, detector: { ...detector, shape: 'curved' } });
    expect(isocentreSampling(curved)).toBeCloseTo((1 / 1000) * 500, 12); // angular step x R
    const par = validateGeometry({ kind: 'parallel', detector: { channels: 64, pitch: [0.8, 0.8] }, anglesDeg: { start: 0, step: 1, count: 180 } });
    expect(nyquistLpPerCm(par)).toBeCloseTo(5 / 0.8, 12);
  });

  it('the window ends at the band limit; a limit above Nyquist keeps the full band and says so', async () => {
    expect(bandEdge(fan, undefined)).toEqual({ edge: 1 });
    expect(bandEdge(fan, 4).edge).toBeCloseTo(0.4, 12);
    const above = bandEdge(fan, 12);
    expect(above.edge).toBe(1);
    expect(above.warning).toMatch(/band limit 12 lp\/cm is at or above the detector's Nyquist frequency at the isocentre \(10\.0 lp\/cm\)/);
    const ws = await localWorkspace();
    const t = await prepareFilter(ws, fan, 64, 'ramp', bandEdge(fan, 4).edge);
    const h = await ws.read(t.response);
    // FFT bin k holds f = k / (nPad tau): f / f_N = 2k / nPad; zero from 0.4 f_N on.
    for (let k = 1; k <= t.nPad / 2; k++) {
      const r = (2 * k) / t.nPad;
      if (r > 0.401) expect(h[k]).toBe(0);
      else if (r < 0.399) expect(h[k]).toBeGreaterThan(0);
    }
  });
});
