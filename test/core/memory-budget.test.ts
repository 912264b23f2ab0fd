// The memory budget: estimates that cover what a run must hold (float32 arrays: 4 bytes a value,
// common practice), and a refusal before any work that names the binning that fits.
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { validateGeometry } from '../../web/core/geometry/validate';
import { checkMemoryBudget, estimateRun } from '../../web/core/memory-budget';
import { validateRecipe } from '../../web/core/recipe/recipe';

// The clinical-size case: 400 views of a 1024 x 768 panel into 512^3.
const carm = validateGeometry({
  kind: 'cone', detector: { shape: 'flat', channels: 1024, rows: 768, pitch: [0.4, 0.4], offset: [0, 0] },
  sourceIsocenter: 750, sourceDetector: 1200, anglesDeg: { start: 0, step: 0.5, count: 400 },
});
const fdk512 = validateRecipe({ method: 'fbp', grid: { size: 512, pixel: 0.5 }, volume: { slices: 512, spacing: 0.5 } });
const page = { workers: 2, sharedMemory: true, storesResult: true };
const GB = 1e9;

describe('memory estimates', () => {
  it('FDK 512^3 holds the volume and a chunk of filtered views, not the scan', () => {
    const e = estimateRun(carm, fdk512, page);
    const volume = 512 ** 3 * 4, scan = 400 * 1024 * 768 * 4;
    expect(e.bytes).toBeGreaterThan(volume + 1024 * 768 * 4);
    expect(e.bytes - volume).toBeLessThan(scan / 1.5); // streamed: the scan is never held whole
    // Private memories (a page opened from disk): every worker holds its own volume.
    expect(estimateRun(carm, fdk512, { ...page, sharedMemory: false }).bytes).toBeGreaterThan(e.bytes + volume);
    // Regression pin: about 1.3 GB with the residual sample and the program.
    expect(e.bytes / GB).toBeGreaterThan(1.0);
    expect(e.bytes / GB).toBeLessThan(1.6);
  });

  it('iterative methods hold the scan and several projection-sized buffers', () => {
    const sart = validateRecipe({ method: 'sart', grid: { size: 256, pixel: 1 }, volume: { slices: 256, spacing: 1 } });
    const g = validateGeometry({ ...carm, detector: { ...carm.detector, channels: 512, rows: 384, pitch: [0.8, 0.8] }, anglesDeg: { start: 0, step: 1, count: 360 } });
    const scan = 360 * 512 * 384 * 4;
    expect(estimateRun(g, sart, page).bytes).toBeGreaterThan(6 * scan);
    // 2 x 2 binning quarters the seven projection-sized arrays.
    expect(estimateRun(g, sart, page).bytes - estimateRun(g, { ...sart, reduce: { bin: 2 } }, page).bytes).toBeGreaterThanOrEqual(7 * 0.75 * scan);
  });
});

describe('pixel weights of iterative methods', () => {
  const sart256 = validateRecipe({ method: 'sart', subsets: 20, grid: { size: 256, pixel: 1 }, volume: { slices: 256, spacing: 1 } });
  // 160^3: every subset's weights fit in one engine (20 x 16 MB), beyond the default share.
  const sart = validateRecipe({ ...sart256, grid: { size: 160, pixel: 1.6 }, volume: { slices: 160, spacing: 1.6 } });
  const g = validateGeometry({ ...carm, detector: { ...carm.detector, channels: 512, rows: 384, pitch: [0.8, 0.8] }, anglesDeg: { start: 0, step: 1, count: 360 } });
  const cli = { workers: 2, sharedMemory: true, scanInMemory: true };
  // 20 subsets of 160^3 float32 weights: 20 x 4 x 160^3 bytes (common practice: 4 bytes a value).
  const allWeights = 20 * 4 * 160 ** 3;

  it('holds every subset\'s weights when the budget allows, else recomputes them and still runs', () => {
    const held = checkMemoryBudget(g, sart, cli, 8 * GB, '--memory-limit');
    expect(held.pixelWeightFloats).toBe(Number.MAX_SAFE_INTEGER);
    const lean = estimateRun(g, sart, cli);
    expect(held.bytes - lean.bytes).toBeGreaterThanOrEqual(allWeights - 48 * 2 ** 20 * 4);
    const tight = checkMemoryBudget(g, sart, cli, lean.bytes + 1, '--memory-limit');
    expect(tight.pixelWeightFloats).toBe(48 * 2 ** 20);
    expect(tight.bytes).toBe(lean.bytes);
    expect(() => checkMemoryBudget(g, sart, cli, lean.bytes - 1, '--memory-limit')).toThrow(/with 2 x 2 detector binning/);
  });

  it('never plans more engine memory than one WebAssembly memory addresses (4 GiB), however large the budget', () => {
    // WebAssembly Core Specification 1.0, 2.5.4: a 32-bit memory holds at most 65536 pages of 64 KiB.
    // 256^3: every subset's weights (20 x 67 MB) fit in one engine (about 2.8 GB): held.
    expect(checkMemoryBudget(g, sart256, cli, 100 * GB, '--memory-limit').pixelWeightFloats).toBe(Number.MAX_SAFE_INTEGER);
    // 512^3: ten volume-sized engine arrays alone pass 4 GiB: refused before any work, with the binning that fits.
    const big = validateRecipe({ ...sart, grid: { size: 512, pixel: 0.5 }, volume: { slices: 512, spacing: 0.5 } });
    expect(() => checkMemoryBudget(g, big, cli, 100 * GB, '--memory-limit')).toThrow(/of engine memory .*more than the 4\.2 GB one WebAssembly engine can address; with 2 x 2 detector binning and a 256 x 256 x 256 volume/);
  });
});

describe('memory budget', () => {
  it('refuses before any work, naming the estimate, the budget and the binning that fits', () => {
    expect(() => checkMemoryBudget(carm, fdk512, page, 1 * GB, '--memory-limit')).toThrow(InputError);
    expect(() => checkMemoryBudget(carm, fdk512, page, 1 * GB, '--memory-limit')).toThrow(
      /memory: this run needs about 1\.\d GB \(engine: volume, filtered views .*\), more than the budget of 1\.0 GB \(--memory-limit\); with 2 x 2 detector binning and a 256 x 256 x 256 volume of 1\.00 mm voxels it needs about \d+ MB/,
    );
    expect(checkMemoryBudget(carm, fdk512, page, 2 * GB, 'the browser').bytes).toBeLessThan(2 * GB);
    expect(() => checkMemoryBudget(carm, fdk512, page, 0.15 * GB, 'the browser')).toThrow(/no detector binning brings it under the budget/);
  });
});
