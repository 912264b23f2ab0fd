// Benchmark section of the iterative methods: 20 iterations of OS-SART + reweighted TV on a
// 512 x 512 extended grid, 360 views of a truncated fan-beam scan of the thorax phantom, with
// one and two workers. Targets (issue 4): under 10 s with 2 workers, speed-up >= 1.7x,
// peak memory under 600 MB.
import { availableParallelism } from 'node:os';
import { cropDetector, presetGeometry } from '../../core/geometry/presets';
import { thorax } from '../../core/phantoms/thorax';
import { validateRecipe } from '../../core/recipe/recipe';
import { runRecipe } from '../../core/recipe/run';
import type { Scan } from '../../core/scan';
import { analyticSinogram } from '../../core/simulate/analytic';
import { openWorkspace } from '../engine-node';

export interface IterativeBenchRow {
  workers: number;
  seconds: number;
  iterations: number;
  extendedChannels: number;
}

export interface IterativeBench {
  problem: string;
  rows: IterativeBenchRow[];
  speedup: number | null;
  peakRssMb: number;
  targets: { secondsWith2Workers: number; speedup: number; peakRssMb: number };
}

/** The truncated demo scan: thorax phantom, 360 views, 345 of the 1100 demo channels. */
export function benchScan(views = 360): Scan {
  const preset = presetGeometry('demo')!;
  const full = { ...preset, anglesDeg: { start: 0, step: 360 / views, count: views } };
  const { geometry, first } = cropDetector(full, 345);
  const p = thorax();
  const all = analyticSinogram(p, full);
  const nFull = full.detector.channels, n = geometry.detector.channels;
  const data = new Float32Array(views * n);
  for (let v = 0; v < views; v++) data.set(all.subarray(v * nFull + first, v * nFull + first + n), v * n);
  return { geometry, data, muWater: p.muWater };
}

export async function benchIterative(repeat = 1): Promise<IterativeBench> {
  const scan = benchScan();
  const recipe = validateRecipe({ method: 'wtv', grid: { size: 512, pixel: 576 / 512 }, iterations: 20, subsets: 20 });
  const rows: IterativeBenchRow[] = [];
  for (const workers of [1, Math.min(2, availableParallelism())]) {
    if (rows.some((r) => r.workers === workers)) break;
    const ws = await openWorkspace(workers);
    try {
      // A short warm-up run compiles the kernels; then the timed runs.
      await runRecipe(ws, scan, { ...recipe, iterations: 1, subsets: 4 });
      const times: number[] = [];
      let report: Record<string, unknown> = {};
      for (let r = 0; r < repeat; r++) {
        const t = performance.now();
        report = (await runRecipe(ws, scan, recipe)).report;
        times.push((performance.now() - t) / 1000);
      }
      const ext = report.extension as { channels: number };
      rows.push({ workers, seconds: Math.min(...times), iterations: report.iterations as number, extendedChannels: ext.channels });
    } finally {
      ws.dispose();
    }
  }
  const one = rows.find((r) => r.workers === 1)!.seconds;
  const two = rows.find((r) => r.workers === 2)?.seconds;
  return {
    problem: '20 iterations OS-SART (20 subsets) + reweighted TV (20 steps), 512x512 grid of 1.125 mm, 360 views, fan beam, 345 measured channels extended to cover the grid',
    rows,
    speedup: two ? one / two : null,
    peakRssMb: process.resourceUsage().maxRSS / 1024,
    targets: { secondsWith2Workers: 10, speedup: 1.7, peakRssMb: 600 },
  };
}

/** Text lines for the bench report. */
export function iterativeLines(b: IterativeBench): string[] {
  return [
    `iterative: ${b.problem}`,
    ...b.rows.map((r) => `OS-SART + wTV, ${r.iterations} iterations, ${r.extendedChannels} channels  ${String(r.workers).padStart(2)} worker(s)  ${r.seconds.toFixed(2).padStart(7)} s`),
    `speed-up 1 -> 2 workers (iterative): ${b.speedup ? b.speedup.toFixed(2) + 'x' : 'n/a (one core)'} (target >= ${b.targets.speedup}x; target under ${b.targets.secondsWith2Workers} s with 2 workers)`,
    `peak resident memory so far: ${b.peakRssMb.toFixed(0)} MB (target under ${b.targets.peakRssMb} MB)`,
  ];
}
