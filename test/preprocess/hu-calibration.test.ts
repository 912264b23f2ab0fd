// HU calibration end to end: a simulated water-cylinder scan as raw detector frames (photon
// noise, per-element gain and dark offset), preprocessed with its flat and dark frames,
// reconstructed by FBP, calibrated on a region marked as water. HU = 1000 (mu - mu_w) / mu_w
// (ICRP 129; REFERENCES.md [hu-definition]); water's mu at 60 keV is NIST's 0.02059 /mm (REFERENCES.md [nist-srd126]).
import { describe, expect, it } from 'vitest';
import { readScanFile } from '../../web/core/formats/read-scan';
import { writeTiffStack } from '../../web/core/formats/tiff';
import { validateGeometry } from '../../web/core/geometry/validate';
import { muToHu, squareGrid } from '../../web/core/image';
import { MU_WATER_60KEV } from '../../web/core/phantoms/materials';
import { waterCylinder } from '../../web/core/phantoms/thorax';
import { checkMuWater, measureMuWater, regionMask } from '../../web/core/preprocess/hu-calibration';
import { fbp2d } from '../../web/core/recon/fbp';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { poisson, seededRandom } from '../../web/core/simulate/noise';
import { localWorkspace } from '../helpers/engine';

describe('water calibration', () => {
  it('a water region calibrated from a simulated raw scan reads 0 +/- 5 HU elsewhere', async () => {
    const channels = 440, views = 360; // FOV radius about 120 mm: the 100 mm cylinder is not truncated
    const geometry = validateGeometry({
      kind: 'fan', detector: { shape: 'flat', channels, pitch: [1.0, 1.0] }, sourceIsocenter: 500, sourceDetector: 900,
      anglesDeg: { start: 0, step: 1, count: views },
    });
    expect(MU_WATER_60KEV).toBeCloseTo(0.02059, 5);
    const p = analyticSinogram(waterCylinder(100), geometry, 4);
    const rand = seededRandom(2024);
    const gain = Float32Array.from({ length: channels }, () => 0.8 + 0.4 * rand());
    const dark = Float32Array.from({ length: channels }, () => 50 + 10 * rand());
    const i0 = 2e5;
    const flat = Float32Array.from(gain, (g, k) => dark[k] + g * i0);
    const counts = p.map((x, k) => dark[k % channels] + poisson(gain[k % channels] * i0 * Math.exp(-x), rand));
    const tif = (data: Float32Array, frames: number) => [{ name: 'f.tif', bytes: writeTiffStack({ width: channels, height: 1, frames, data }) }];
    const read = await readScanFile(tif(counts, views), { geometry, flat: tif(flat, 1), dark: tif(dark, 1) });
    expect(read.warnings).toEqual([]);

    const ws = await localWorkspace();
    const { image } = await fbp2d(ws, read.scan, { grid: squareGrid(200, 1.2), filter: 'hann' });
    const marked = measureMuWater(image, { shape: 'circle', cx: -20, cy: 10, radius: 35 });
    expect(marked.pixels).toBeGreaterThan(2500);
    // The calibration agrees with the physics the simulation used (FBP reproduces mu within 0.5%).
    expect(Math.abs(marked.muWater - MU_WATER_60KEV) / MU_WATER_60KEV).toBeLessThan(0.005);
    const scan = { ...read.scan, muWater: checkMuWater(marked.muWater) };
    // Another water region, disjoint from the marked one, in HU with the calibrated mu_water.
    const hu = muToHu(image.data, scan.muWater);
    const other = regionMask(image, { shape: 'rectangle', x0: 30, y0: -60, x1: 70, y1: -20 });
    let sum = 0, n = 0;
    other.forEach((m, k) => {
      if (m) {
        sum += hu[k];
        n++;
      }
    });
    expect(n).toBeGreaterThan(900);
    expect(Math.abs(sum / n)).toBeLessThan(5);
    // Air outside the cylinder, inside the measured field, reads about -1000 HU (the scale's other fixed point).
    const air = regionMask(image, { shape: 'rectangle', x0: 106, y0: -6, x1: 115, y1: 6 });
    let airSum = 0, airN = 0;
    air.forEach((m, k) => {
      if (m) {
        airSum += hu[k];
        airN++;
      }
    });
    expect(Math.abs(airSum / airN + 1000)).toBeLessThan(20);
  });

  it('a region marked as soft tissue of known HU gives mu_water = mean / (1 + HU/1000)', () => {
    const grid = squareGrid(10, 1);
    const image = { grid, data: new Float32Array(100).fill(0.0214), quantity: 'mu' as const };
    const m = measureMuWater(image, { shape: 'rectangle', x0: -3, y0: -3, x1: 3, y1: 3 }, 40);
    expect(m.muWater).toBeCloseTo(Math.fround(0.0214) / 1.04, 12);
    expect(m.stdHu).toBeCloseTo(0, 9);
  });

  it('rejects a region without pixels, non-finite pixels and absurd hand-set values', () => {
    const grid = squareGrid(10, 1);
    const image = { grid, data: new Float32Array(100).fill(0.02), quantity: 'mu' as const };
    expect(() => measureMuWater(image, { shape: 'circle', cx: 100, cy: 0, radius: 3 })).toThrow(/covers 0 pixels/);
    image.data[55] = Number.NaN;
    expect(() => measureMuWater(image, { shape: 'circle', cx: 0, cy: 0, radius: 3 })).toThrow(/not finite/);
    expect(() => checkMuWater(-0.02)).toThrow(/mu_water: got -0.02/);
    expect(() => checkMuWater(19.2)).toThrow(/expected the attenuation of water in 1\/mm/);
  });

  it('refuses a region over pixels the result does not determine (a DBP result\'s fill), and measures one beside them', () => {
    const grid = squareGrid(10, 1);
    const image = { grid, data: new Float32Array(100).fill(0.02), quantity: 'mu' as const };
    // Pixel centres at -4.5 ... 4.5 mm; the left three columns (x = -4.5, -3.5, -2.5 mm) are not determined:
    // the first rectangle holds two of their pixels (x -2.5, y +-0.5), the second none.
    const undetermined = Uint8Array.from({ length: 100 }, (_, q) => (q % 10 < 3 ? 1 : 0));
    expect(() => measureMuWater(image, { shape: 'rectangle', x0: -3, y0: -1, x1: 1, y1: 1 }, 0, undetermined)).toThrow(/2 pixels of the marked region are not determined by this result/);
    expect(measureMuWater(image, { shape: 'rectangle', x0: -2, y0: -2, x1: 3, y1: 2 }, 0, undetermined).muWater).toBeCloseTo(0.02, 7);
  });
});
