// Execution: the iterative methods give the same image in one thread, split into two parts, and
// on real 2-worker pools (shared memory as in the CLI, private memories as in a page opened
// from disk). Not merely within rounding but to the bit: the adjoint sums fixed view chunks in
// a fixed order and every reduction adds per-line sums in line order, because the TV phase
// (normalized steps on a nearly non-smooth gradient) would otherwise amplify rounding
// differences to ~0.1%. Progress is reported per subset step; a cancelled run rejects with
// CancelledError within one step and changes nothing.
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
import { openWorkspace } from '../../web/cli/engine-node';
import { privatePool } from '../helpers/private-pool';

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
afterAll(() => pools.forEach((w) => { w.dispose(); }));

const recipes: Array<[string, Recipe]> = [
  ['sart', validateRecipe({ method: 'sart', grid: { size: 96, pixel: 1.4 }, iterations: 4, subsets: 10 })],
  ['wtv', validateRecipe({ method: 'wtv', grid: { size: 96, pixel: 1.4 }, iterations: 6, subsets: 10 })],
  ['prior', validateRecipe({ method: 'prior', prior: { source: 'image' }, grid: { size: 96, pixel: 1.4 }, iterations: 6, subsets: 10 })],
];

describe('iterative methods on workers', () => {
  it.each(recipes)('%s: one thread, two parts, and real 2-worker pools give the same bits', async (_, recipe) => {
    const inputs = { prior };
    const one = await runRecipe(await localWorkspace(1), scan, recipe, {}, inputs);
    const two = await runRecipe(await localWorkspace(2), scan, recipe, {}, inputs);
    const shared = await openWorkspace(2);
    const priv = await privatePool(2);
    pools.push(shared, priv);
    const onShared = await runRecipe(shared, scan, recipe, {}, inputs);
    const onPrivate = await runRecipe(priv, scan, recipe, {}, inputs);
    for (const other of [two, onShared, onPrivate]) {
      expect(Array.from(other.image.data)).toEqual(Array.from(one.image.data));
      expect(other.report.history).toEqual(one.report.history);
    }
    expect(Math.max(...one.image.data)).toBeGreaterThan(0.2 * p.muWater); // not a trivial image
  });

  it('reports progress once per subset step, rising to 1', async () => {
    const ws = await localWorkspace(2);
    const seen: Array<[number, string]> = [];
    await runRecipe(ws, scan, recipes[1][1], { onProgress: (f, s) => seen.push([f, s]) });
    const steps = seen.filter(([, s]) => s.startsWith('iteration'));
    expect(steps).toHaveLength(6 * 10);
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
