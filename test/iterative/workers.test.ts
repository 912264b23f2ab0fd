// Execution: the iterative methods give the same image within float rounding in one thread, split
// into two parts, and on real 2-worker pools (shared memory as in the CLI, private memories as
// in a page opened from disk). Splitting changes only the order of float sums in the
// back-projection (rounding, ~1e-7). SART keeps it there; the TV phase steps along a
// normalized, nearly non-smooth gradient and ASD-POCS makes step decisions on norms, which
// amplify rounding somewhat: those methods agree to 0.2% RMS. Progress is reported per subset
// step; a cancelled run rejects with CancelledError within one step and changes nothing.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CancelledError } from '../../web/core/errors';
import type { Workspace } from '../../web/core/engine/workspace';
import { squareGrid, type Image2D } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { validateRecipe, type Recipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { addPhotonNoise } from '../../web/core/simulate/noise';
import type { Scan } from '../../web/core/scan';
import { localWorkspace } from '../helpers/engine';
import { fanFlat } from '../helpers/geometries';
import { privatePool, sharedPool } from '../helpers/pools';

const p = sheppLogan('modified', 60);
let scan: Scan;
let prior: Image2D;
const pools: Workspace[] = [];

beforeAll(() => {
  // Truncated: 150 channels of 1 mm reach 41 mm from the isocentre; the phantom is 55 mm.
  const g = fanFlat(150, 1, 120);
  const data = analyticSinogram(p, g, 2);
  addPhotonNoise(data, 1e5, 4);
  scan = { geometry: g, data, muWater: p.muWater };
  prior = { grid: squareGrid(70, 2), data: rasterize(p, squareGrid(70, 2), 2), quantity: 'mu' };
});
afterAll(() => pools.forEach((w) => w.dispose()));

/** Largest and RMS difference of b from a, relative to a's largest value and RMS. */
function differences(a: Float32Array, b: Float32Array): { max: number; rms: number } {
  let worst = 0, d2 = 0, a2 = 0, top = 0;
  for (let i = 0; i < a.length; i++) {
    worst = Math.max(worst, Math.abs(a[i] - b[i]));
    d2 += (a[i] - b[i]) ** 2;
    a2 += a[i] ** 2;
    top = Math.max(top, Math.abs(a[i]));
  }
  return { max: worst / top, rms: Math.sqrt(d2 / a2) };
}

const recipes: Array<[string, Recipe, { max: number; rms: number }]> = [
  ['sart', validateRecipe({ method: 'sart', grid: { size: 96, pixel: 1.4 }, iterations: 4, subsets: 10 }), { max: 1e-5, rms: 1e-6 }],
  ['wtv', validateRecipe({ method: 'wtv', grid: { size: 96, pixel: 1.4 }, iterations: 4, subsets: 10 }), { max: 1e-2, rms: 2e-3 }],
  ['prior', validateRecipe({ method: 'prior', prior: { source: 'image' }, grid: { size: 96, pixel: 1.4 }, iterations: 4, subsets: 10 }), { max: 1e-2, rms: 2e-3 }],
];

describe('iterative methods on workers', () => {
  it.each(recipes)('%s: one thread, two parts, and real 2-worker pools agree within float rounding', async (_, recipe, tol) => {
    const inputs = { prior };
    const one = await runRecipe(await localWorkspace(1), scan, recipe, {}, inputs);
    const two = await runRecipe(await localWorkspace(2), scan, recipe, {}, inputs);
    const shared = await sharedPool(2);
    const priv = await privatePool(2);
    pools.push(shared, priv);
    const onShared = await runRecipe(shared, scan, recipe, {}, inputs);
    const onPrivate = await runRecipe(priv, scan, recipe, {}, inputs);
    for (const other of [two, onShared, onPrivate]) {
      const d = differences(one.image.data, other.image.data);
      expect(d.max).toBeLessThan(tol.max);
      expect(d.rms).toBeLessThan(tol.rms);
    }
    expect(Math.max(...one.image.data)).toBeGreaterThan(0.2 * p.muWater); // not a trivial image
  });

  it('reports progress once per subset step, rising to 1', async () => {
    const ws = await localWorkspace(2);
    const seen: Array<[number, string]> = [];
    await runRecipe(ws, scan, recipes[1][1], { onProgress: (f, s) => seen.push([f, s]) });
    const steps = seen.filter(([, s]) => s.startsWith('iteration'));
    expect(steps).toHaveLength(4 * 10);
    for (let i = 1; i < seen.length; i++) expect(seen[i][0]).toBeGreaterThanOrEqual(seen[i - 1][0]);
    expect(seen.at(-1)).toEqual([1, 'done']);
  });

  it('cancel: stops within one subset step, rejects with CancelledError, changes nothing', async () => {
    const ws = await localWorkspace(2);
    const recipe = recipes[2][1];
    const inputs = { prior };
    const before = await runRecipe(ws, scan, recipe, {}, inputs);
    const scanCopy = Float32Array.from(scan.data), priorCopy = Float32Array.from(prior.data);
    const controller = new AbortController();
    let stepsAfterAbort = 0;
    let steps = 0;
    const run = runRecipe(ws, scan, recipe, {
      signal: controller.signal,
      onProgress: (_, stage) => {
        if (!stage.startsWith('iteration')) return;
        if (controller.signal.aborted) stepsAfterAbort++;
        if (++steps === 13) controller.abort();
      },
    }, inputs);
    await expect(run).rejects.toBeInstanceOf(CancelledError);
    expect(steps).toBe(13);
    expect(stepsAfterAbort).toBe(0);
    expect(Array.from(scan.data)).toEqual(Array.from(scanCopy));
    expect(Array.from(prior.data)).toEqual(Array.from(priorCopy));
    // The workspace is as good as before: the same run gives the same image.
    const after = await runRecipe(ws, scan, recipe, {}, inputs);
    expect(Array.from(after.image.data)).toEqual(Array.from(before.image.data));
  });

  it('cancel before the start: rejects at once', async () => {
    const ws = await localWorkspace(1);
    const controller = new AbortController();
    controller.abort();
    await expect(runRecipe(ws, scan, recipes[0][1], { signal: controller.signal })).rejects.toBeInstanceOf(CancelledError);
  });
});
