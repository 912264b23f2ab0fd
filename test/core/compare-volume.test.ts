import { describe, expect, it } from 'vitest';
import { compareVolumes } from '../../web/core/compare-volume';
import { InputError } from '../../web/core/errors';
import { seededRandom } from '../../web/core/simulate/noise';
import { volumeOrigin, type Volume, type VolumeGrid } from '../../web/core/volume';
import { fixtureF32, fixtureJson } from '../helpers/fixtures';

const grid: VolumeGrid = { nx: 30, ny: 26, nz: 5, dx: 2, dy: 2, dz: 3, cx: 1, cy: 0, cz: 0 };
const n = grid.nx * grid.ny * grid.nz;

/** Smooth structure plus seeded noise, mu-like values. */
function volume(seed: number, noise: number): Float32Array {
  const rand = seededRandom(seed);
  return Float32Array.from({ length: n }, (_, q) => {
    const i = q % grid.nx, j = Math.floor(q / grid.nx) % grid.ny, k = Math.floor(q / (grid.nx * grid.ny));
    return 0.02 + 0.01 * Math.sin(i / 4 + k) * Math.cos(j / 3) + noise * (rand() - 0.5);
  });
}

describe('volume comparison', () => {
  // SSIM (Wang et al. 2004) computed in axial slices and RMSE / PSNR over the voxels, checked
  // against scikit-image (REFERENCES.md [ssim-2004], [psnr]): structural_similarity per slice with
  // the paper's settings averaged over the slices, and numpy's RMSE / skimage's
  // peak_signal_noise_ratio with the reference's range. The volumes and skimage's figures are
  // committed fixtures made by scripts/reference/metric_values.py.
  it('agrees with scikit-image slice by slice and over the volume', () => {
    const ref = fixtureJson<{ size: number[]; ssim: number[]; rmse: number; psnr: number }>('metrics/volume/expected.json');
    const [nx, ny, nz] = ref.size;
    const g: VolumeGrid = { nx, ny, nz, dx: 2, dy: 2, dz: 3, cx: 1, cy: 0, cz: 0 };
    const a = fixtureF32('metrics/volume/a.f32'), b = fixtureF32('metrics/volume/b.f32');
    const mine = compareVolumes({ grid: g, data: a, quantity: 'mu' }, { grid: g, data: b, quantity: 'mu' }, { perSlice: true });
    const all = mine.regions.volume!;
    expect(mine.unit).toBe('1/mm');
    expect(all.pixels).toBe(nx * ny * nz);
    expect(all.rmse).toBeCloseTo(ref.rmse, 9);
    expect(all.psnr).toBeCloseTo(ref.psnr, 6);
    const meanSsim = ref.ssim.reduce((x, y) => x + y, 0) / ref.ssim.length;
    expect(meanSsim).toBeLessThan(0.95);
    expect(Math.abs(all.ssim - meanSsim)).toBeLessThan(1e-3);
    expect(mine.slices).toHaveLength(nz);
    mine.slices!.forEach((s, k) => { expect(Math.abs(s.regions.volume!.ssim - ref.ssim[k]), `slice ${k}`).toBeLessThan(1e-3); });
    expect(mine.regions.insideFov).toBeNull();
  });

  it('splits the object at the FOV cylinder (radius and half height about the isocentre), in HU', () => {
    // Reference: water everywhere. Image: 10 HU more inside the cylinder (r 18 mm, |z| <= 3 mm).
    const muWater = 0.02, r = 18, h = 3;
    const ref = new Float32Array(n).fill(muWater);
    const img = Float32Array.from(ref);
    const { x0, y0, z0 } = volumeOrigin(grid);
    let inside = 0;
    for (let q = 0; q < n; q++) {
      const i = q % grid.nx, j = Math.floor(q / grid.nx) % grid.ny, k = Math.floor(q / (grid.nx * grid.ny));
      if (Math.hypot(x0 + i * grid.dx, y0 + j * grid.dy) <= r && Math.abs(z0 + k * grid.dz) <= h) {
        img[q] += 0.01 * muWater; // 10 HU (HU = 1000 (mu - mu_water) / mu_water)
        inside++;
      }
    }
    const c = compareVolumes({ grid, data: img, quantity: 'mu', muWater }, { grid, data: ref, quantity: 'mu', muWater }, { fovRadius: r, fovHalfHeight: h });
    expect(c.unit).toBe('HU');
    expect(inside).toBeGreaterThan(200);
    expect(c.regions.insideFov!.pixels).toBe(inside);
    expect(c.regions.insideFov!.rmse).toBeCloseTo(10, 4);
    expect(c.regions.outsideFov!.pixels).toBe(n - inside);
    expect(c.regions.outsideFov!.rmse).toBeCloseTo(0, 6);
    expect(c.fovHalfHeightMm).toBe(h);
  });

  it('resamples a reference on another grid (trilinear: exact for linear functions)', () => {
    const f = (x: number, y: number, z: number) => 0.02 + 0.0002 * x - 0.0001 * y + 0.0003 * z;
    const fine: VolumeGrid = { nx: 70, ny: 60, nz: 13, dx: 1, dy: 1, dz: 1.5, cx: 0.5, cy: 0.25, cz: 0 };
    const sample = (g: VolumeGrid) => {
      const o = volumeOrigin(g);
      return Float32Array.from({ length: g.nx * g.ny * g.nz }, (_, q) =>
        f(o.x0 + (q % g.nx) * g.dx, o.y0 + (Math.floor(q / g.nx) % g.ny) * g.dy, o.z0 + Math.floor(q / (g.nx * g.ny)) * g.dz));
    };
    const c = compareVolumes({ grid, data: sample(grid), quantity: 'mu' }, { grid: fine, data: sample(fine), quantity: 'mu' });
    expect(c.resampled).toBe(true);
    expect(c.regions.volume!.rmse).toBeLessThan(1e-7);
  });

  it('refuses volumes with values that are not numbers', () => {
    const bad: Volume = { grid, data: volume(1, 0), quantity: 'mu' };
    bad.data[7] = NaN;
    expect(() => compareVolumes(bad, { grid, data: volume(1, 0), quantity: 'mu' })).toThrow(InputError);
    expect(() => compareVolumes(bad, { grid, data: volume(1, 0), quantity: 'mu' })).toThrow(/1 voxels are not finite/);
  });
});
