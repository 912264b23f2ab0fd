// Bench section "iterative3d": iterative methods on volumes at the FDK section's size: 20
// iterations of 3D OS-SART on a 256^3 grid of 1 mm from 360 projections of 512 x 384 cells of
// the 3D Shepp-Logan head, then the prior-guided method (its FDK prior with water extension,
// then OS-SART with reweighted TV) on the same grid, both on two workers, each with its time per
// iteration, the memory the budget estimates for it, and the process's peak resident memory
// (bench.ts reports the section's peak; VmHWM is read after each run here).
import { readFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { validateGeometry } from '../../core/geometry/validate';
import { estimateRun } from '../../core/memory-budget';
import { sheppLogan3d } from '../../core/phantoms/shepp-logan-3d';
import { validateRecipe } from '../../core/recipe/recipe';
import { runRecipe } from '../../core/recipe/run';
import { analyticConeProjections } from '../../core/simulate/analytic-cone';
import { openWorkspace } from '../engine-node';
import type { SectionResult } from './section';

export interface Iterative3dRow {
  method: string;
  iterations: number;
  seconds: number;
  secondsPerIteration: number;
  /** The memory budget's estimate for the run, MB. */
  estimateMb: number;
  /** Peak resident memory of the process after the run, MB. */
  peakRssMb: number;
}

function peakRss(): number {
  try {
    return Number(/VmHWM:\s*(\d+)/.exec(readFileSync('/proc/self/status', 'utf8'))![1]) / 1024;
  } catch {
    return process.resourceUsage().maxRSS / 1024;
  }
}

/** Runs the section; `log` gets progress lines (a run takes minutes). */
export async function benchIterative3d(log: (line: string) => void): Promise<SectionResult> {
  const geometry = validateGeometry({
    kind: 'cone', detector: { shape: 'flat', channels: 512, rows: 384, pitch: [0.8, 0.8], offset: [0, 0] },
    sourceIsocenter: 750, sourceDetector: 1200, anglesDeg: { start: 0, step: 1, count: 360 },
  });
  const head = sheppLogan3d('modified');
  const problem = '256^3 volume of 1 mm voxels from 360 views of 512 x 384 cells of 0.8 mm (R 750 mm, D 1200 mm), 3D Shepp-Logan head, 2 workers';
  log(`iterative3d: ${problem}`);
  const scan = { geometry, data: await analyticConeProjections(head, geometry), muWater: head.muWater };
  const workers = Math.min(2, availableParallelism());
  const grid = { grid: { size: 256, pixel: 1 }, volume: { slices: 256, spacing: 1 } };
  const recipes = [
    validateRecipe({ method: 'sart', iterations: 20, subsets: 20, ...grid }),
    validateRecipe({ method: 'prior', iterations: 5, subsets: 20, ...grid }),
  ];
  const rows: Iterative3dRow[] = [];
  const ws = await openWorkspace(workers);
  try {
    for (const recipe of recipes) {
      const estimate = estimateRun(geometry, recipe, { workers, sharedMemory: true, scanInMemory: true });
      const t = performance.now();
      let last = -1;
      const r = await runRecipe(ws, scan, recipe, {
        onProgress: (f, stage) => {
          const pct = Math.floor(f * 20) * 5;
          if (pct !== last) log(`iterative3d: ${recipe.method} ${pct}% ${stage}`);
          last = pct;
        },
      });
      const seconds = (performance.now() - t) / 1000;
      const iterations = Number(r.report.iterations ?? recipe.iterations ?? 0);
      const timing = r.report.timings as { iterations?: number } | undefined;
      rows.push({
        method: recipe.method, iterations, seconds, secondsPerIteration: (timing?.iterations ?? seconds) / Math.max(1, iterations),
        estimateMb: estimate.bytes / 2 ** 20, peakRssMb: peakRss(),
      });
      log(`iterative3d: ${recipe.method}: ${seconds.toFixed(1)} s`);
    }
  } finally {
    ws.dispose();
  }
  const lines = [
    `Iterative methods on volumes: ${problem}`,
    ...rows.map((r) => `${r.method === 'sart' ? 'OS-SART (20 subsets)' : 'prior-guided (FDK + water prior, OS-SART + wTV)'}: ${r.iterations} iterations in ${r.seconds.toFixed(1)} s (${r.secondsPerIteration.toFixed(1)} s per iteration); budget estimate ${r.estimateMb.toFixed(0)} MB, peak resident memory so far ${r.peakRssMb.toFixed(0)} MB`),
  ];
  return { json: { problem, rows }, lines };
}
