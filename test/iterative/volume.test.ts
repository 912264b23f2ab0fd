// The iterative methods on volumes (cone-beam scans): OS-SART with the 3D projector on consistent
// data (our projector's projections of a voxelized phantom, so an exact solution exists) must
// lower the measured residual monotonically (Andersen & Kak 1984: SART converges on consistent
// systems for relaxation in (0, 2); REFERENCES.md [andersen-kak-1984]); TV and reweighted TV (ASD-POCS,
// Sidky & Pan 2008, posed in 3D) and the prior-guided method run on volumes with the 3D kernels.
// Holding or recomputing the per-subset pixel weights (the memory budget's choice) gives the same
// volume to the bit; progress covers the set-up; a cancel stops within a batch of views.
import { describe, expect, it } from 'vitest';
import type { Part, Workspace } from '../../web/core/engine/workspace';
import { CancelledError, InputError } from '../../web/core/errors';
import { cropDetector } from '../../web/core/geometry/presets';
import { voxelize } from '../../web/core/phantoms/solid';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { addPhotonNoise } from '../../web/core/simulate/noise';
import { ballsCase, project } from '../helpers/cone';
import { localWorkspace } from '../helpers/engine';

const { phantom, grid, geometry: g } = ballsCase;
const { recipeGrid } = ballsCase;
const truth = voxelize(phantom, grid, 2);
const dataPromise = localWorkspace().then((ws) => project(ws, grid, g, truth));

interface Report {
  iterations: number;
  history: { residual: number[]; tv: number[] };
  residual: { finalRelative: number; perViewRms: number[] };
  prior?: { departure: { insideFov: { pixels: number } } };
}

describe('iterative methods on volumes', () => {
  it('SART: the measured residual falls monotonically on consistent cone-beam data; workers do not change the result', async () => {
    const data = await dataPromise;
    const recipe = validateRecipe({ method: 'sart', ...recipeGrid, iterations: 12, subsets: 6, relaxation: 1, support: 'grid' });
    const one = await runRecipe(await localWorkspace(1), { geometry: g, data, muWater: 0.02 }, recipe);
    const rep = one.report as unknown as Report;
    const h = rep.history.residual;
    expect(h).toHaveLength(12);
    for (let k = 1; k < h.length; k++) expect(h[k]).toBeLessThanOrEqual(h[k - 1] * (1 + 1e-6));
    expect(h[h.length - 1]).toBeLessThan(0.05);
    expect(rep.residual.finalRelative).toBeLessThan(0.05);
    expect(rep.residual.perViewRms).toHaveLength(36);
    // A volume comes back, its central slice as the image, and it approaches the phantom.
    const v = one.volume!;
    expect(v.grid).toEqual(grid);
    expect(one.image.grid).toMatchObject({ nx: 24, ny: 24, dx: 3 });
    let se = 0, st = 0;
    for (let i = 0; i < truth.length; i++) {
      se += (v.data[i] - truth[i]) ** 2;
      st += truth[i] ** 2;
    }
    expect(Math.sqrt(se / st)).toBeLessThan(0.2);
    // Ordered subsets and line sums are split between workers without changing a bit.
    const three = await runRecipe(await localWorkspace(3), { geometry: g, data, muWater: 0.02 }, recipe);
    expect(Array.from(three.volume!.data)).toEqual(Array.from(v.data));
  });

  it('TV lowers the total variation the TV phase descends; reweighted TV brings a noisy volume closer to the phantom', async () => {
    const data = Float32Array.from(await dataPromise);
    addPhotonNoise(data, 2e4, 3);
    const ws = await localWorkspace(2);
    const scan = { geometry: g, data, muWater: 0.02 };
    const run = async (method: string, tvStrength?: number) => {
      const r = await runRecipe(ws, scan, validateRecipe({ method, ...recipeGrid, iterations: 6, subsets: 6, ...(tvStrength ? { tvStrength } : {}) }));
      const h = (r.report as unknown as Report).history;
      expect(h.residual[h.residual.length - 1]).toBeLessThan(0.5 * h.residual[0]);
      let se = 0;
      for (let i = 0; i < truth.length; i++) se += (r.volume!.data[i] - truth[i]) ** 2;
      return { tv: h.tv[h.tv.length - 1], rmse: Math.sqrt(se / truth.length) };
    };
    // Regression pins (the factors 0.97 and 0.95), measured on the deterministic engine: SART TV 20.71, RMSE 59.8 HU; TV (step 0.02) TV 19.52;
    // reweighted TV (step 0.02) RMSE 55.3 HU. Plain TV also flattens the small dense ball, so
    // its RMSE rises (75.5 HU): the reweighted form keeps edges (Candes, Wakin & Boyd 2008).
    const sart = await run('sart');
    expect((await run('tv', 0.02)).tv).toBeLessThan(0.97 * sart.tv);
    expect((await run('wtv', 0.02)).rmse).toBeLessThan(0.95 * sart.rmse);
  });

  it('prior-guided: on a truncated cone-beam scan it improves on its prior (FDK with water extension) inside and beyond the FOV', async () => {
    // The detector cut to its central 20 channels (FOV radius about 21 mm, the ball 25 mm).
    const { geometry: cut, first } = cropDetector(g, 20);
    const full = await dataPromise;
    const data = new Float32Array(36 * 32 * 20);
    for (let r = 0; r < 36 * 32; r++) data.set(full.subarray(r * 48 + first, r * 48 + first + 20), r * 20);
    const ws = await localWorkspace(2);
    const scan = { geometry: cut, data, muWater: 0.02 };
    const r = await runRecipe(ws, scan, validateRecipe({ method: 'prior', ...recipeGrid, iterations: 4, subsets: 6 }));
    const fdk = await runRecipe(ws, scan, validateRecipe({ method: 'fbp', extend: 'water', ...recipeGrid }));
    // RMS error (HU) against the phantom within / beyond 20 mm of the axis (the FOV radius is 21 mm).
    const err = (v: Float32Array, inside: boolean) => {
      let se = 0, n = 0;
      for (let at = 0; at < truth.length; at++) {
        const i = at % 24, j = Math.floor(at / 24) % 24;
        if ((Math.hypot((i - 11.5) * 3, (j - 11.5) * 3) < 20) !== inside) continue;
        se += (v[at] - truth[at]) ** 2;
        n++;
      }
      return (Math.sqrt(se / n) / 0.02) * 1000;
    };
    const rep = r.report as unknown as Report;
    const h = rep.history.residual;
    expect(h[h.length - 1]).toBeLessThan(h[0]);
    expect(rep.prior!.departure.insideFov.pixels).toBeGreaterThan(100);
    // A prior made from the scan itself: inside the FOV the result keeps the prior's smooth part
    // (the truncated data cannot settle it; iterative/inside-step.ts) and is no worse; beyond the
    // FOV, where the data correction lands, it improves. Measured (regression pin): inside 74.6 HU
    // against the prior's 75.6, beyond 101 HU against 136.
    expect(err(r.volume!.data, true)).toBeLessThanOrEqual(err(fdk.volume!.data, true));
    expect(err(r.volume!.data, false)).toBeLessThan(0.9 * err(fdk.volume!.data, false));
    expect(r.volume!.grid).toEqual(grid);
    // The default prior (FDK of the truncated scan) has negative voxels from noise and streaks: in
    // the report, not a warning (only a prior the user gives is worth one).
    expect(r.warnings.join(' ')).not.toMatch(/negative attenuation/);
    expect((rep.prior as unknown as { negative: { count: number; what: string } }).negative).toMatchObject({ what: 'voxels' });
  });

  it('pixel weights recomputed at each step (when every subset\'s do not fit the budget) give the same volume to the bit', async () => {
    const data = await dataPromise;
    const scan = { geometry: g, data, muWater: 0.02 };
    const recipe = validateRecipe({ method: 'sart', ...recipeGrid, iterations: 2, subsets: 6 });
    const ws = await localWorkspace(2);
    const held = await runRecipe(ws, scan, recipe);
    const recomputed = await runRecipe(ws, scan, recipe, {}, { pixelWeightFloats: 0 });
    expect(Array.from(recomputed.volume!.data)).toEqual(Array.from(held.volume!.data));
  });

  it('progress covers the set-up (each subset\'s weights) and the iterations; a cancel stops within a batch of views, not a whole projection', async () => {
    const data = await dataPromise;
    const scan = { geometry: g, data, muWater: 0.02 };
    // 36 views in 3 subsets: 12 views a projection, taken 4 at a time by 2 workers.
    const recipe = validateRecipe({ method: 'sart', ...recipeGrid, iterations: 2, subsets: 3 });
    const seen: Array<[number, string]> = [];
    await runRecipe(await localWorkspace(2), scan, recipe, { onProgress: (f, stage) => seen.push([f, stage]) });
    expect(seen.filter(([, s]) => s.startsWith('setup: weights of subset')).map(([, s]) => s)).toEqual(['setup: weights of subset 1 of 3', 'setup: weights of subset 2 of 3', 'setup: weights of subset 3 of 3']);
    for (let k = 1; k < seen.length; k++) expect(seen[k][0]).toBeGreaterThanOrEqual(seen[k - 1][0]);
    expect(seen.at(-1)).toEqual([1, 'done']);

    // Cancel once the first subset step's (voxel-driven) backprojection has run one batch of views.
    const inner = await localWorkspace(2);
    const controller = new AbortController();
    let iterating = false, batches = 0, afterCancel = 0;
    const counting: Workspace = new Proxy(inner, {
      get(target, key, receiver) {
        if (key !== 'run') return Reflect.get(target, key, receiver);
        return async (parts: Part[]) => {
          if (controller.signal.aborted && parts.some((q) => q.kernel.startsWith('joseph') || q.kernel === 'backprojectCone')) afterCancel++;
          const out = await target.run(parts);
          if (iterating && parts[0]?.kernel === 'backprojectCone' && ++batches === 1) controller.abort();
          return out;
        };
      },
    });
    const run = runRecipe(counting, scan, recipe, {
      signal: controller.signal,
      onProgress: (_, stage) => { if (stage === 'setup: weights of subset 3 of 3') iterating = true; },
    });
    await expect(run).rejects.toBeInstanceOf(CancelledError);
    expect(batches).toBe(1);
    expect(afterCancel).toBe(0);
  });

  it('refuses what a volume cannot take, naming it', async () => {
    const data = await dataPromise;
    const scan = { geometry: g, data };
    const ws = await localWorkspace();
    await expect(runRecipe(ws, scan, validateRecipe({ method: 'sart', ...recipeGrid, support: 'image' }), {}, { supportMask: { grid: { nx: 2, ny: 2, dx: 1, dy: 1, cx: 0, cy: 0 }, data: new Float32Array(4).fill(1), quantity: 'mu' } }))
      .rejects.toThrow(/support: "image" \(a mask image\) works on 2D scans/);
    await expect(runRecipe(ws, scan, validateRecipe({ method: 'prior', prior: { source: 'image' }, ...recipeGrid })))
      .rejects.toThrow(InputError);
  });
});
