// Intensity preprocessing: flat/dark correction and -ln(I/I0) (Beer-Lambert; REFERENCES.md [transmission-noise]),
// reading frames from files end to end, with every clamp and fill counted.
import { describe, expect, it } from 'vitest';
import { validateGeometry } from '../../web/core/geometry/validate';
import { readScanFile } from '../../web/core/formats/read-scan';
import { writeTiffStack } from '../../web/core/formats/tiff';
import { waterCylinder } from '../../web/core/phantoms/thorax';
import { applyWaterPolynomial } from '../../web/core/preprocess/beam-hardening';
import { intensitiesToLineIntegrals } from '../../web/core/preprocess/intensity';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { seededRandom } from '../../web/core/simulate/noise';

const channels = 40, rows = 3, views = 6, frame = channels * rows;
const geometry = validateGeometry({
  kind: 'cone', detector: { channels, rows, pitch: [4, 4] }, sourceIsocenter: 500, sourceDetector: 900,
  anglesDeg: { start: 0, step: 60, count: views },
});

/** Known line integrals: a 2D water-cylinder sinogram repeated on every detector row (0 .. ~3.3). */
function knownLineIntegrals(): Float32Array {
  const g2 = validateGeometry({ kind: 'fan', detector: { channels, pitch: [4, 4] }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 60, count: views } });
  const p2 = analyticSinogram(waterCylinder(80), g2);
  const out = new Float32Array(views * frame);
  for (let v = 0; v < views; v++) for (let r = 0; r < rows; r++) out.set(p2.subarray(v * channels, (v + 1) * channels), (v * rows + r) * channels);
  return out;
}

describe('flat and dark fields', () => {
  it('a flat-field stack with known attenuation gives the line integrals within 1e-5', async () => {
    const rand = seededRandom(11);
    const p = knownLineIntegrals();
    expect(Math.max(...p)).toBeGreaterThan(3); // attenuation up to e^-3.3: a demanding range for float32 counts
    const gain = Float32Array.from({ length: frame }, () => 0.7 + 0.6 * rand());
    const dark = Float32Array.from({ length: frame }, () => 90 + 20 * rand());
    const i0 = 20000;
    // Four flat frames whose per-element deviations cancel in the mean: the average is exact.
    const flats = new Float32Array(4 * frame);
    for (let f = 0; f < 4; f++) for (let i = 0; i < frame; i++) flats[f * frame + i] = dark[i] + gain[i] * i0 + [-3, 3, -1.5, 1.5][f];
    const intens = p.map((x, k) => dark[k % frame] + gain[k % frame] * i0 * Math.exp(-x));
    const tif = (data: Float32Array, n: number) => [{ name: 'x.tif', bytes: writeTiffStack({ width: channels, height: rows, frames: n, data }) }];
    const r = await readScanFile(tif(intens, views), { geometry, flat: tif(flats, 4), dark: tif(dark, 1) });
    expect(r.intensity?.nonPositive).toBe(0);
    let worst = 0;
    for (let k = 0; k < p.length; k++) worst = Math.max(worst, Math.abs(r.scan.data[k] - p[k]));
    expect(worst).toBeLessThan(1e-5);
    expect(r.warnings).toEqual([]);
  });

  it('-ln(I/I0) with a scalar I0 and dark level', () => {
    // I0 is the reading of the unattenuated beam: the dark level is subtracted from it too.
    const data = new Float32Array([1010, 500, 100, 10]);
    const rep = intensitiesToLineIntegrals(data, 4, 1, { i0: 1010, dark: 10 });
    expect(Array.from(data).map((x) => +x.toFixed(6))).toEqual([0, Math.log(1000 / 490), Math.log(1000 / 90), Math.log(1000)].map((x) => +x.toFixed(6)));
    // The last reading equals the dark level: transmission 0, clamped to one count in 1000.
    expect(rep.nonPositive).toBe(1);
  });
});

describe('untrustworthy readings are counted', () => {
  it('saturated, non-positive, non-finite and bad elements', () => {
    // One view, one row, 6 channels, I0 = 1000: true transmissions 0.5 everywhere.
    const data = new Float32Array([500, 500, Number.NaN, 500, 1200, -5]);
    const bad = new Uint8Array([0, 1, 0, 0, 0, 0]);
    const r = intensitiesToLineIntegrals(data, 6, 1, { i0: 1000, saturation: 1100, badPixels: bad });
    expect(r).toMatchObject({ readings: 6, nonPositive: 1, saturated: 1, nonFinite: 1, deadInFlat: 0, filled: 2, rowsWithoutGood: 0 });
    const ln2 = Math.log(2);
    expect(data[0]).toBeCloseTo(ln2, 6);
    expect(data[1]).toBeCloseTo(ln2, 6); // bad element, filled between neighbours
    expect(data[2]).toBeCloseTo(ln2, 6); // NaN, filled
    expect(data[4]).toBeCloseTo(-Math.log(1.1), 6); // capped at the saturation level
    expect(data[5]).toBeCloseTo(Math.log(1000), 6); // clamped to one count
  });

  it('bad elements are filled by linear interpolation along the row', () => {
    // Line integrals 0.1 k: intensities 1000 e^{-0.1 k}; elements 2..4 bad.
    const data = Float32Array.from({ length: 8 }, (_, k) => 1000 * Math.exp(-0.1 * k));
    const bad = new Uint8Array([0, 0, 1, 1, 1, 0, 0, 1]);
    const r = intensitiesToLineIntegrals(data, 8, 1, { i0: 1000, badPixels: bad });
    expect(r.filled).toBe(4);
    for (let k = 0; k < 7; k++) expect(data[k]).toBeCloseTo(0.1 * k, 5);
    expect(data[7]).toBeCloseTo(0.6, 5); // a bad element at the row end copies its neighbour
  });

  it('a flat element not above its dark is treated as bad', () => {
    const data = new Float32Array([600, 600, 600]);
    const r = intensitiesToLineIntegrals(data, 3, 1, { flat: new Float32Array([1100, 100, 1100]), dark: 100 });
    expect(r.deadInFlat).toBe(1);
    expect(Array.from(data).map((x) => +x.toFixed(6))).toEqual([Math.log(2), Math.log(2), Math.log(2)].map((x) => +x.toFixed(6)));
  });
});

describe('water beam-hardening polynomial', () => {
  it('maps a two-energy water measurement back to the monochromatic line integral', () => {
    // Two equal spectral lines with water mu 0.0227 and 0.0171 /mm (NIST 50 and 100 keV,
    // REFERENCES.md [nist-srd126]); the polychromatic p(L) = -ln(0.5 e^{-mu1 L} + 0.5 e^{-mu2 L}) bends
    // below the line mu_eff L. A cubic least-squares fit of mu_eff L against p, done here on
    // 0..300 mm, must bring every p back to mu_eff L within 0.2%.
    const mu1 = 0.02269, mu2 = 0.01707, muEff = (mu1 + mu2) / 2;
    const Ls = Array.from({ length: 61 }, (_, i) => i * 5);
    const poly = (L: number) => -Math.log(0.5 * Math.exp(-mu1 * L) + 0.5 * Math.exp(-mu2 * L));
    // Normal equations for c1 p + c2 p^2 + c3 p^3 = muEff L.
    const A = [[0, 0, 0], [0, 0, 0], [0, 0, 0]], b = [0, 0, 0];
    for (const L of Ls) {
      const p = poly(L), f = [p, p * p, p * p * p];
      for (let i = 0; i < 3; i++) {
        b[i] += f[i] * muEff * L;
        for (let j = 0; j < 3; j++) A[i][j] += f[i] * f[j];
      }
    }
    const c = solve3(A, b);
    const p = Float32Array.from(Ls, poly);
    const before = Math.abs(p[60] - muEff * 300) / (muEff * 300);
    applyWaterPolynomial(p, c);
    expect(before).toBeGreaterThan(0.02);
    for (let i = 1; i < Ls.length; i++) expect(Math.abs(p[i] - muEff * Ls[i]) / (muEff * Ls[i])).toBeLessThan(0.002);
  });
});

/** Gaussian elimination for the 3 x 3 normal equations. */
function solve3(A: number[][], b: number[]): number[] {
  const m = A.map((r, i) => [...r, b[i]]);
  for (let i = 0; i < 3; i++) {
    for (let k = i + 1; k < 3; k++) {
      const f = m[k][i] / m[i][i];
      for (let j = i; j < 4; j++) m[k][j] -= f * m[i][j];
    }
  }
  const x = [0, 0, 0];
  for (let i = 2; i >= 0; i--) {
    let rest = m[i][3];
    for (let j = i + 1; j < 3; j++) rest -= m[i][j] * x[j];
    x[i] = rest / m[i][i];
  }
  return x;
}

describe('corrections of line-integral scans', () => {
  it('bad elements and the water polynomial apply to line integrals read from a file; saturation does not', async () => {
    const g = { kind: 'parallel', detector: { channels: 4, pitch: 1 }, anglesDeg: { start: 0, step: 90, count: 2 } };
    const data = new Float32Array([1, 2, 99, 4, 2, 4, 99, 8]);
    const files = () => [
      { name: 's.json', bytes: new TextEncoder().encode(JSON.stringify({ ...g, dtype: 'float32', sizes: [4, 2] })) },
      { name: 's.raw', bytes: new Uint8Array(data.slice().buffer) },
    ];
    const r = await readScanFile(files(), { badPixels: new Uint8Array([0, 0, 1, 0]), correction: { waterPolynomial: [1, 0.5] } });
    // Filled: 3 and 6; then p + 0.5 p^2.
    expect(Array.from(r.scan.data)).toEqual([1, 2, 3, 4, 2, 4, 6, 8].map((p) => p + 0.5 * p * p));
    await expect(readScanFile(files(), { correction: { saturation: 10 } })).rejects.toThrow(/line integrals already/);
  });
});
