// OS-SART on consistent, noise-free data (the data are our projector's projections of a
// phantom, so an exact solution exists): the measured-data residual must fall monotonically
// and end below 1% of its start (Andersen & Kak 1984: SART converges on consistent systems for
// relaxation in (0, 2); REFERENCES.md [andersen-kak-1984]).
import { describe, expect, it } from 'vitest';
import { squareGrid } from '../../web/core/image';
import { circleMask, rmse } from '../../web/core/metrics';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { Projector2d } from '../../web/core/recon/projector';
import { OsSart } from '../../web/core/iterative/os-sart';
import { setUpProblem, supportMask } from '../../web/core/iterative/problem';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { convergenceHistories } from '../../web/ui/logic/convergence';
import { localWorkspace } from '../helpers/engine';
import { fanCurved, fanFlat, parallel } from '../helpers/geometries';

describe('SART', () => {
  it('consistent data: residual falls monotonically to below 1% of its start', async () => {
    const ws = await localWorkspace();
    const g = fanFlat(240, 1, 180); // FOV radius 66 mm: the 55 mm phantom is not truncated
    const grid = squareGrid(128, 1);
    const truth = rasterize(sheppLogan('modified', 55), grid, 4);
    const p = await Projector2d.create(ws, grid, g);
    const img = ws.alloc('truth', truth.length), sino = ws.alloc('sino', p.nViews * p.nCh);
    await ws.write(img, truth);
    await p.forward(img, sino);
    const data = await ws.read(sino);

    const recipe = validateRecipe({ method: 'sart', grid: { size: 128, pixel: 1 }, iterations: 30, subsets: 30, relaxation: 1, support: 'grid' });
    const r = await runRecipe(ws, { geometry: g, data }, recipe);
    const rep = r.report as {
      iterations: number;
      history: { residual: number[]; tv: number[] };
      residual: { startRms: number; finalRms: number; finalRelative: number; perViewRms: number[] };
    };
    const h = rep.history.residual;
    expect(rep.iterations).toBe(30);
    expect(h).toHaveLength(30);
    expect(rep.history.tv).toHaveLength(30);
    // Monotone within float rounding.
    for (let k = 1; k < h.length; k++) expect(h[k]).toBeLessThanOrEqual(h[k - 1] * (1 + 1e-6));
    expect(h[h.length - 1]).toBeLessThan(0.01);
    // The exact residual of the final image, from a fresh projection.
    expect(rep.residual.finalRelative).toBeLessThan(0.01);
    // The start is the zero image: its residual is the data's RMS.
    const dataRms = Math.sqrt(data.reduce((s, v) => s + v * v, 0) / data.length);
    expect(rep.residual.startRms).toBeCloseTo(dataRms, 6);
    expect(rep.residual.perViewRms).toHaveLength(180);
    // The page plots report.convergence.
    const plotted = convergenceHistories(r.report);
    expect(plotted.map((p) => p.label)).toEqual(['residual (fraction of start)', 'TV (fraction of first iteration)']);
    expect(plotted[0].values).toEqual(h);
    expect(Math.max(...rep.residual.perViewRms)).toBeLessThan(0.02 * dataRms);
    // And the image approaches the phantom (contrast of the smallest ellipses: 0.1 mu_water).
    const object = circleMask(grid, 50);
    expect(rmse(r.image.data, truth, object)).toBeLessThan(0.05 * 0.0206);
  });

  it.each([
    ['parallel', parallel(160, 0.8, 90)],
    ['fan, curved detector', fanCurved(240, 1, 90)],
    ['fan, short scan', fanFlat(240, 1, 100, 200)],
  ])('%s: consistent data converge as well', async (_, g) => {
    const ws = await localWorkspace(2);
    const grid = squareGrid(64, 2);
    const truth = rasterize(sheppLogan('modified', 55), grid, 2);
    const p = await Projector2d.create(ws, grid, g);
    const img = ws.alloc('truth', truth.length), sino = ws.alloc('sino', p.nViews * p.nCh);
    await ws.write(img, truth);
    await p.forward(img, sino);
    const r = await runRecipe(ws, { geometry: g, data: await ws.read(sino) }, validateRecipe({ method: 'sart', grid: { size: 64, pixel: 2 }, iterations: 30, subsets: 15, relaxation: 1, support: 'grid' }));
    const h = (r.report as { history: { residual: number[] } }).history.residual;
    for (let k = 1; k < h.length; k++) expect(h[k]).toBeLessThanOrEqual(h[k - 1] * (1 + 1e-6));
    expect(h.at(-1)).toBeLessThan(0.01);
  });

  it('stops at the residual tolerance', async () => {
    const ws = await localWorkspace();
    const g = fanFlat(240, 1, 90);
    const grid = squareGrid(64, 2);
    const truth = rasterize(sheppLogan('modified', 55), grid, 2);
    const p = await Projector2d.create(ws, grid, g);
    const img = ws.alloc('truth', truth.length), sino = ws.alloc('sino', p.nViews * p.nCh);
    await ws.write(img, truth);
    await p.forward(img, sino);
    const data = await ws.read(sino);
    const r = await runRecipe(ws, { geometry: g, data }, validateRecipe({ method: 'sart', grid: { size: 64, pixel: 2 }, iterations: 200, tolerance: 0.05, relaxation: 1 }));
    const rep = r.report as { iterations: number; stoppedBy: string; history: { residual: number[] } };
    expect(rep.stoppedBy).toBe('tolerance');
    expect(rep.iterations).toBeLessThan(200);
    expect(rep.history.residual.at(-1)).toBeLessThanOrEqual(0.05);
    expect(rep.history.residual.at(-2)).toBeGreaterThan(0.05);
  });
});

describe('SART set-up', () => {
  it('pixel weights recomputed per step (when all subsets do not fit in memory) give the same sweep', async () => {
    const g = fanFlat(100, 1, 40);
    const grid = squareGrid(40, 2);
    const support = supportMask(grid, 'disk');
    const truth = rasterize(sheppLogan('modified', 35), grid, 2);
    const ws0 = await localWorkspace();
    const p = await Projector2d.create(ws0, grid, g);
    const img = ws0.alloc('truth', truth.length), sino = ws0.alloc('sino', p.nViews * p.nCh);
    await ws0.write(img, truth);
    await p.forward(img, sino);
    const problem = setUpProblem({ geometry: g, data: await ws0.read(sino) }, grid, support, 8, 0);
    const sweep = async (budget?: number) => {
      const ws = await localWorkspace(2);
      const sart = await OsSart.create(ws, { ...problem, support: Float32Array.from(support), pixelWeightBudget: budget });
      const x = ws.alloc('x', grid.nx * grid.ny);
      await ws.write(x, new Float32Array(grid.nx * grid.ny));
      const residual = await sart.sweep(x, 1, 0, {});
      return { residual, image: await ws.read(x) };
    };
    const kept = await sweep();
    const recomputed = await sweep(0);
    expect(recomputed.residual).toBe(kept.residual);
    expect(Array.from(recomputed.image)).toEqual(Array.from(kept.image));
    expect(Math.max(...kept.image)).toBeGreaterThan(0.003); // one sweep made real progress
  });

  it('a support mask image: pixels outside stay 0', async () => {
    const ws = await localWorkspace();
    const g = fanFlat(240, 1, 60);
    const p = sheppLogan('modified', 55);
    const data = analyticSinogram(p, g);
    const maskGrid = squareGrid(30, 4);
    const mask = { grid: maskGrid, data: Float32Array.from(circleMask(maskGrid, 40)), quantity: 'mu' as const };
    const recipe = validateRecipe({ method: 'tv', support: 'image', grid: { size: 64, pixel: 2 }, iterations: 3 });
    const r = await runRecipe(ws, { geometry: g, data }, recipe, {}, { supportMask: mask });
    const inside = circleMask(squareGrid(64, 2), 42), outside = circleMask(squareGrid(64, 2), 38);
    for (let i = 0; i < r.image.data.length; i++) {
      if (!inside[i]) expect(r.image.data[i]).toBe(0);
    }
    expect(r.image.data.filter((v, i) => outside[i] && v > 0).length).toBeGreaterThan(500);
    await expect(runRecipe(ws, { geometry: g, data }, recipe)).rejects.toThrow(/recipe support: "image" needs a mask image/);
  });
});
