// Bench rows: what detector extension (truncation correction) adds to an FBP of the benchmark
// size (512 x 512 image, 720 views over 360 degrees, 1024 channels, fan beam, flat detector).
// The detector pitch is 0.35 mm, so that the field of view covers about 60% of the thorax
// phantom's body width, as in the demo; planning (edge analysis, water cylinder fits, mass
// consistency) and the extension kernel are included in the timed FBP.
import { validateGeometry } from '../../core/geometry/validate';
import { thorax } from '../../core/phantoms/thorax';
import { chooseGrid } from '../../core/recipe/grid';
import { fbp2d } from '../../core/recon/fbp';
import type { Scan } from '../../core/scan';
import { analyticSinogram } from '../../core/simulate/analytic';
import { EXTEND_METHODS } from '../../core/truncation/extend-methods';
import { planExtension } from '../../core/truncation/extension-plan';
import { openWorkspace } from '../engine-node';

export interface ExtensionBench {
  workers: number;
  fbpSeconds: number;
  /** Median seconds of a whole FBP with each extension method (planning included). */
  extendedSeconds: Record<string, number>;
  /** Largest relative increase of wall-clock time over plain FBP across the methods. */
  worstOverhead: number;
  worstMethod: string;
  /** The same in CPU time of the whole process (all workers): less sensitive to other load on the machine. */
  worstCpuOverhead: number;
  worstCpuMethod: string;
  channelsAdded: { left: number; right: number };
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[xs.length >> 1];

/** The truncated benchmark scan: exact projections of the thorax phantom. */
export function truncatedBenchScan(): Scan {
  const geometry = validateGeometry({
    kind: 'fan', detector: { shape: 'flat', channels: 1024, rows: 1, pitch: [0.35, 0.35], offset: [0, 0] },
    sourceIsocenter: 600, sourceDetector: 1000, anglesDeg: { start: 0, step: 0.5, count: 720 },
  });
  const p = thorax();
  return { geometry, data: analyticSinogram(p, geometry), muWater: p.muWater };
}

/**
 * Times FBP without and with each extension method on `workers` workers: `repeat` rounds
 * after one warm-up, the methods interleaved within each round so that drift in machine load
 * hits all of them alike. The grid is the default one (512 pixels covering the estimated object).
 */
export async function benchExtension(workers: number, repeat: number): Promise<ExtensionBench> {
  const scan = truncatedBenchScan();
  const grid = chooseGrid(scan);
  const times = new Map<string, number[]>(EXTEND_METHODS.map((m) => [m, []]));
  const cpu = new Map<string, number[]>(EXTEND_METHODS.map((m) => [m, []]));
  let channelsAdded = { left: 0, right: 0 };
  const ws = await openWorkspace(workers);
  try {
    for (let r = 0; r <= repeat; r++) {
      for (const method of EXTEND_METHODS) {
        const t = performance.now(), c = process.cpuUsage();
        const plan = method === 'none' ? undefined : planExtension(scan, method);
        await fbp2d(ws, scan, { grid, extension: plan });
        const used = process.cpuUsage(c);
        if (r > 0) {
          times.get(method)!.push((performance.now() - t) / 1000);
          cpu.get(method)!.push((used.user + used.system) / 1e6);
        }
        if (plan) channelsAdded = plan.summary.channelsAdded;
      }
    }
  } finally {
    ws.dispose();
  }
  const fbpSeconds = median(times.get('none')!), fbpCpu = median(cpu.get('none')!);
  const extendedSeconds: Record<string, number> = {};
  let worstOverhead = -Infinity, worstMethod = '', worstCpuOverhead = -Infinity, worstCpuMethod = '';
  for (const m of EXTEND_METHODS) {
    if (m === 'none') continue;
    extendedSeconds[m] = median(times.get(m)!);
    const o = extendedSeconds[m] / fbpSeconds - 1;
    if (o > worstOverhead) [worstOverhead, worstMethod] = [o, m];
    const oc = median(cpu.get(m)!) / fbpCpu - 1;
    if (oc > worstCpuOverhead) [worstCpuOverhead, worstCpuMethod] = [oc, m];
  }
  return { workers, fbpSeconds, extendedSeconds, worstOverhead, worstMethod, worstCpuOverhead, worstCpuMethod, channelsAdded };
}

/** Text lines for the bench report. */
export function extensionBenchLines(b: ExtensionBench): string[] {
  return [
    `truncated scan (FOV ~60% of the body, ${b.channelsAdded.left} + ${b.channelsAdded.right} channels added), ${b.workers} worker(s):`,
    `  FBP without extension ${(b.fbpSeconds * 1000).toFixed(0)} ms; with ` +
      Object.entries(b.extendedSeconds).map(([m, s]) => `${m} ${(s * 1000).toFixed(0)} ms`).join(', '),
    `  extension overhead (worst method): wall clock ${(100 * b.worstOverhead).toFixed(1)}% (${b.worstMethod}), CPU time ${(100 * b.worstCpuOverhead).toFixed(1)}% (${b.worstCpuMethod}) (target < 10%)`,
  ];
}
