// Bench section "iterative3d": iterative methods on volumes at the FDK section's size. 20
// iterations of 3D OS-SART (20 subsets) on a 256^3 grid of 1 mm from 360 projections of 512 x 384
// cells of the 3D Shepp-Logan head, then the prior-guided method (its FDK prior with water
// extension, then OS-SART with reweighted TV; 5 iterations) on the same grid, both on two workers
// as `rimfill reconstruct` runs them: the memory budget (the free memory) decides whether every
// subset's pixel weights are held. Each run gives its time, time per iteration, final residual,
// its error against the phantom, the budget's estimate, its own peak resident memory and the
// load it ran at. Then a run is cancelled halfway through a subset step and the time until it
// stops is measured.
import { availableParallelism, freemem } from 'node:os';
import { CancelledError } from '../../core/errors';
import type { Geometry } from '../../core/geometry/types';
import { validateGeometry } from '../../core/geometry/validate';
import { checkMemoryBudget, showBytes } from '../../core/memory-budget';
import { sheppLogan3d } from '../../core/phantoms/shepp-logan-3d';
import { voxelize } from '../../core/phantoms/solid';
import { validateRecipe, type Recipe } from '../../core/recipe/recipe';
import { runRecipe } from '../../core/recipe/run';
import type { Scan } from '../../core/scan';
import type { Volume } from '../../core/volume';
import { analyticConeProjections } from '../../core/simulate/analytic-cone';
import type { Workspace } from '../../core/engine/workspace';
import { openWorkspace } from '../engine-node';
import { loadText, trackPeakRss } from './peak-memory';
import type { SectionResult } from './section';

/** The problem's size: the bench's own, or a smaller one to try the section quickly. */
export interface Iterative3dSize {
  channels: number;
  rows: number;
  pitch: number;
  views: number;
  voxels: number;
  voxelMm: number;
  sartIterations: number;
  priorIterations: number;
}

export const ITERATIVE3D_SIZE: Iterative3dSize = { channels: 512, rows: 384, pitch: 0.8, views: 360, voxels: 256, voxelMm: 1, sartIterations: 20, priorIterations: 5 };

export interface Iterative3dRow {
  method: string;
  iterations: number;
  seconds: number;
  setupSeconds: number;
  secondsPerIteration: number;
  /** Measured residual at the end over the start's (report.residual.finalRelative). */
  finalRelativeResidual: number;
  /** RMS error against the phantom over the voxels inside the head, HU. */
  rmseHu: number;
  /** The memory budget's estimate for the run, MB, and whether every subset's pixel weights were held. */
  estimateMb: number;
  pixelWeightsHeld: boolean;
  /** Peak resident memory of the process during the run (sampled every 200 ms), MB. */
  peakRssMb: number;
  loadBefore: string;
  loadAfter: string;
}

function geometryOf(s: Iterative3dSize): Geometry {
  return validateGeometry({
    kind: 'cone', detector: { shape: 'flat', channels: s.channels, rows: s.rows, pitch: [s.pitch, s.pitch], offset: [0, 0] },
    sourceIsocenter: 750, sourceDetector: 1200, anglesDeg: { start: 0, step: 360 / s.views, count: s.views },
  });
}

/** RMS error (HU) of a volume against the phantom's voxels (centre values) inside the head. */
function rmseHu(v: Volume, truth: Float32Array, muWater: number): number {
  let se = 0, n = 0;
  for (let i = 0; i < truth.length; i++) {
    if (truth[i] <= 0) continue;
    se += (v.data[i] - truth[i]) ** 2;
    n++;
  }
  return (Math.sqrt(se / n) / muWater) * 1000;
}

/** Runs `recipe` as the CLI does (budget: the free memory) and measures it. */
async function measure(ws: Workspace, scan: Scan, recipe: Recipe, workers: number, truth: Float32Array, log: (line: string) => void): Promise<Iterative3dRow> {
  const estimate = checkMemoryBudget(scan.geometry, recipe, { workers, sharedMemory: true, scanInMemory: true }, freemem(), 'the free memory');
  const peak = trackPeakRss();
  const loadBefore = loadText();
  const t = performance.now();
  let last = -1;
  const r = await runRecipe(ws, scan, recipe, {
    onProgress: (f, stage) => {
      const pct = Math.floor(f * 20) * 5;
      if (pct !== last) log(`iterative3d: ${recipe.method} ${pct}% ${stage} (${((performance.now() - t) / 1000).toFixed(0)} s, ${loadText()})`);
      last = pct;
    },
  }, { pixelWeightFloats: estimate.pixelWeightFloats });
  const seconds = (performance.now() - t) / 1000;
  const rep = r.report as { iterations?: number; timings?: { setup: number; iterations: number }; residual?: { finalRelative: number } };
  const iterations = rep.iterations ?? recipe.iterations ?? 0;
  return {
    method: recipe.method, iterations, seconds, setupSeconds: rep.timings?.setup ?? 0,
    secondsPerIteration: (rep.timings?.iterations ?? seconds) / Math.max(1, iterations),
    finalRelativeResidual: rep.residual?.finalRelative ?? NaN, rmseHu: rmseHu(r.volume!, truth, scan.muWater!),
    estimateMb: estimate.bytes / 2 ** 20, pixelWeightsHeld: estimate.pixelWeightFloats === Number.MAX_SAFE_INTEGER,
    peakRssMb: peak(), loadBefore, loadAfter: loadText(),
  };
}

/**
 * Starts OS-SART and cancels it halfway through its second subset step (the first one timed
 * how long a step takes), then times how long it takes to stop.
 */
async function measureCancel(ws: Workspace, scan: Scan, recipe: Recipe): Promise<{ secondsToStop: number; stepSeconds: number }> {
  const controller = new AbortController();
  let cancelledAt = 0, stepSeconds = 0, lastAt = 0;
  const run = runRecipe(ws, scan, recipe, {
    signal: controller.signal,
    onProgress: (_, stage) => {
      const t = performance.now();
      if (stage.startsWith('iteration') && !stepSeconds) {
        stepSeconds = (t - lastAt) / 1000;
        setTimeout(() => {
          cancelledAt = performance.now();
          controller.abort();
        }, (stepSeconds * 1000) / 2);
      }
      lastAt = t;
    },
  });
  try {
    await run;
    throw new Error('iterative3d: the cancelled run finished instead of stopping');
  } catch (err) {
    if (!(err instanceof CancelledError)) throw err;
  }
  return { secondsToStop: (performance.now() - cancelledAt) / 1000, stepSeconds };
}

/** Runs the section; `log` gets progress lines (the runs take many minutes). */
export async function benchIterative3d(log: (line: string) => void, size: Iterative3dSize = ITERATIVE3D_SIZE): Promise<SectionResult> {
  const geometry = geometryOf(size);
  const head = sheppLogan3d('modified');
  const workers = Math.min(2, availableParallelism());
  const n = size.voxels;
  const problem = `${n}^3 volume of ${size.voxelMm} mm voxels from ${size.views} views of ${size.channels} x ${size.rows} cells of ${size.pitch} mm (R 750 mm, D 1200 mm), 3D Shepp-Logan head, ${workers} workers`;
  log(`iterative3d: ${problem}`);
  const scan: Scan = { geometry, data: await analyticConeProjections(head, geometry), muWater: head.muWater };
  const grid = { grid: { size: n, pixel: size.voxelMm }, volume: { slices: n, spacing: size.voxelMm } };
  const truth = voxelize(head, { nx: n, ny: n, nz: n, dx: size.voxelMm, dy: size.voxelMm, dz: size.voxelMm, cx: 0, cy: 0, cz: 0 }, 1);
  const sart = validateRecipe({ method: 'sart', iterations: size.sartIterations, subsets: 20, ...grid });
  const prior = validateRecipe({ method: 'prior', iterations: size.priorIterations, subsets: 20, ...grid });
  const rows: Iterative3dRow[] = [];
  const ws = await openWorkspace(workers);
  let cancel: { secondsToStop: number; stepSeconds: number };
  try {
    for (const recipe of [sart, prior]) {
      const row = await measure(ws, scan, recipe, workers, truth, log);
      rows.push(row);
      log(`iterative3d: ${recipe.method}: ${row.seconds.toFixed(1)} s`);
    }
    cancel = await measureCancel(ws, scan, { ...sart, iterations: 1 });
  } finally {
    ws.dispose();
  }
  const name = (m: string) => (m === 'sart' ? 'OS-SART (20 subsets)' : 'prior-guided (FDK + water prior, OS-SART + wTV, 20 subsets)');
  const lines = [
    `Iterative methods on volumes: ${problem}`,
    ...rows.map((r) => `${name(r.method)}: ${r.iterations} iterations in ${r.seconds.toFixed(0)} s (set-up ${r.setupSeconds.toFixed(0)} s, ` +
      `${r.secondsPerIteration.toFixed(1)} s per iteration), residual ${(100 * r.finalRelativeResidual).toFixed(1)}% of the start, ` +
      `error against the phantom ${r.rmseHu.toFixed(0)} HU RMS inside the head; ` +
      `budget estimate ${showBytes(r.estimateMb * 2 ** 20)} (${r.pixelWeightsHeld ? 'every subset\'s pixel weights held' : 'pixel weights recomputed each step'}), ` +
      `peak resident memory during the run ${r.peakRssMb.toFixed(0)} MB; ${r.loadBefore} before, ${r.loadAfter} after`),
    `cancel halfway through a subset step (${cancel.stepSeconds.toFixed(1)} s a step, pixel weights recomputed): stopped ${cancel.secondsToStop.toFixed(1)} s after the request`,
  ];
  return { json: { problem, rows, cancel }, lines };
}
