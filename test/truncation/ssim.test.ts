import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ssim } from '../../web/core/metrics';
import { seededRandom } from '../../web/core/simulate/noise';

// SSIM of Z. Wang, A. C. Bovik, H. R. Sheikh, E. P. Simoncelli, IEEE TIP 13(4):600-612, 2004,
// checked against an independent general-purpose implementation: scikit-image 0.19.3 (Debian
// python3-skimage, system Python) structural_similarity with the paper's settings
// (references.md section 7: gaussian_weights=True, sigma=1.5, use_sample_covariance=False).

const PYTHON = '/usr/bin/python3';
const nx = 67, ny = 53;

/** A test image: smooth structure plus seeded noise. */
function image(seed: number, noise: number): Float32Array {
  const rand = seededRandom(seed);
  return Float32Array.from({ length: nx * ny }, (_, k) => {
    const i = k % nx, j = Math.floor(k / nx);
    return 100 * Math.sin(i / 7) * Math.cos(j / 5) + 40 * (Math.hypot(i - 30, j - 25) < 12 ? 1 : 0) + noise * (rand() - 0.5);
  });
}

/** skimage's mean SSIM and the mean of its SSIM map over `mask`, from raw float32 files. */
function skimageSsim(a: Float32Array, b: Float32Array, mask: Uint8Array, dataRange: number): { mssim: number; masked: number } {
  const dir = mkdtempSync(join(tmpdir(), 'rimfill-ssim-'));
  try {
    writeFileSync(join(dir, 'a.f32'), new Uint8Array(a.buffer));
    writeFileSync(join(dir, 'b.f32'), new Uint8Array(b.buffer));
    writeFileSync(join(dir, 'm.u8'), mask);
    const script = `
import numpy as np, json, sys
from skimage.metrics import structural_similarity
d = sys.argv[1]
a = np.fromfile(d + '/a.f32', dtype='<f4').reshape(${ny}, ${nx}).astype(np.float64)
b = np.fromfile(d + '/b.f32', dtype='<f4').reshape(${ny}, ${nx}).astype(np.float64)
m = np.fromfile(d + '/m.u8', dtype=np.uint8).reshape(${ny}, ${nx}) > 0
mssim, S = structural_similarity(a, b, gaussian_weights=True, sigma=1.5, use_sample_covariance=False, data_range=${dataRange}, full=True)
print(json.dumps({'mssim': float(mssim), 'masked': float(S[m].mean())}))
`;
    const r = spawnSync(PYTHON, ['-c', script, dir], { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(`reference SSIM failed: ${r.stderr}`);
    return JSON.parse(r.stdout);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

describe('SSIM', () => {
  it('is 1 for an image against itself', () => {
    const a = image(1, 30);
    expect(ssim(a, a, nx, ny, 200)).toBeCloseTo(1, 12);
  });

  it.each([[5, 20, 200], [6, 120, 250], [7, 300, 80]])('agrees with scikit-image to 1e-3 (seed %i, noise %i, data range %i)', (seed, noise, range) => {
    const a = image(1, 10), b = image(seed, noise);
    const mask = Uint8Array.from({ length: nx * ny }, (_, k) => (Math.hypot((k % nx) - 33, Math.floor(k / nx) - 26) < 20 ? 1 : 0));
    const ref = skimageSsim(a, b, mask, range);
    expect(ref.mssim).toBeLessThan(0.99);
    expect(Math.abs(ssim(a, b, nx, ny, range) - ref.mssim)).toBeLessThan(1e-3);
    expect(Math.abs(ssim(a, b, nx, ny, range, mask) - ref.masked)).toBeLessThan(1e-3);
  });
});
