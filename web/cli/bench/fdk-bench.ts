// The FDK section of `rimfill bench`: a 256^3 volume from 360 projections of 512 x 384 cells
// (the project's cone-beam benchmark problem; targets: under 10 s with 2 workers, peak memory below
// 1.5 GB), with one and with two workers. The projections are exact ones of the 3D Shepp-Logan
// head, so the run also reports how close the central slice comes to the table. The cost of
// truncation correction: the same problem on the central 256 channels (FOV radius 64 mm, the
// head truncated), FDK without and with row-wise water extension (planning included).
import { availableParallelism } from 'node:os';
import { asCalibratedViews } from '../../core/geometry/calibrated';
import { validateGeometry } from '../../core/geometry/validate';
import { sheppLogan3d } from '../../core/phantoms/shepp-logan-3d';
import { solidValueAt } from '../../core/phantoms/solid';
import { fdk3d } from '../../core/recon/fdk';
import { analyticConeProjections } from '../../core/simulate/analytic-cone';
import { cropDetector } from '../../core/geometry/presets';
import { planConeExtension } from '../../core/truncation/cone-extension';
import { coneRowExtension } from '../../core/truncation/row-extension';
import { cubicGrid, sliceAt, volumeOrigin, type Volume } from '../../core/volume';
import { openWorkspace } from '../engine-node';

export interface FdkBenchRow {
  name: string;
  workers: number;
  seconds: number;
  /**
   * Processor time of the whole process (all threads) during the run, seconds: on a machine
   * shared with other work, cpuSeconds / workers estimates the wall time it would take alone.
   */
  cpuSeconds?: number;
  /** Voxel-view updates per second of the backprojection, millions. */
  mupdPerS?: number;
}

export interface FdkBench {
  problem: string;
  rows: FdkBenchRow[];
  /** Brain (ellipsoid b) in the central slice: mean relative error against the table. */
  centralSliceError: number;
  peakRssMb: number;
  text: string;
}

const now = () => performance.now() / 1000;

/** Mean relative error over central-slice voxels more than 5 mm inside the brain. */
function brainError(v: Volume): number {
  const p = sheppLogan3d('original');
  const g = v.grid;
  const { x0, y0, z0 } = volumeOrigin(g);
  const k = sliceAt(g, 0);
  const z = z0 + k * g.dz;
  let sum = 0, n = 0;
  for (let j = 0; j < g.ny; j++) {
    for (let i = 0; i < g.nx; i++) {
      const x = x0 + i * g.dx, y = y0 + j * g.dy;
      const t = solidValueAt(p, x, y, z);
      if (Math.abs(t - 1.02 * p.muWater) > 1e-9 || Math.hypot(x / 64, y / 82) > 1) continue;
      sum += v.data[(k * g.ny + j) * g.nx + i] / t - 1;
      n++;
    }
  }
  return sum / n;
}

/** Runs the FDK benchmark; `log` receives a line per stage (the problem takes a while). */
export async function benchFdk(log: (line: string) => void = () => {}): Promise<FdkBench> {
  const geometry = validateGeometry({
    kind: 'cone', detector: { shape: 'flat', channels: 512, rows: 384, pitch: [0.8, 0.8], offset: [0, 0] },
    sourceIsocenter: 750, sourceDetector: 1200, anglesDeg: { start: 0, step: 1, count: 360 },
  });
  const grid = cubicGrid(256, 1.0, 256);
  const problem = '256^3 volume of 1 mm voxels, 360 views over 360 degrees, 512 x 384 cells of 0.8 mm, R 750 mm, D 1200 mm';
  log(`fdk: ${problem}`);
  const t0 = now();
  const data = await analyticConeProjections(sheppLogan3d('original'), geometry);
  log(`fdk: exact projections of the 3D Shepp-Logan head in ${(now() - t0).toFixed(1)} s (not timed below)`);
  const small = validateGeometry({ ...geometry, detector: { ...geometry.detector, channels: 64, rows: 48 }, anglesDeg: { start: 0, step: 45, count: 8 } });
  const smallData = new Float32Array(8 * 48 * 64).fill(0.1);
  const rows: FdkBenchRow[] = [];
  let centralSliceError = NaN;
  const updates = 256 ** 3 * 360;
  for (const workers of [...new Set([1, Math.min(2, availableParallelism())])]) {
    const ws = await openWorkspace(workers);
    try {
      // Warm-up on a tiny problem: the first call of a kernel runs in the baseline compiler.
      await fdk3d(ws, { geometry: small, data: smallData }, { grid: cubicGrid(32, 4, 8) });
      const t = now();
      const cpu = process.cpuUsage();
      const r = await fdk3d(ws, { geometry, data }, { grid });
      const seconds = now() - t;
      const used = process.cpuUsage(cpu);
      rows.push({ name: 'FDK (weights + filter + backprojection)', workers, seconds, cpuSeconds: (used.user + used.system) / 1e6 });
      rows.push({ name: `FDK backprojection (${r.backprojector})`, workers, seconds: r.timings.backproject, mupdPerS: updates / r.timings.backproject / 1e6 });
      rows.push({ name: 'FDK weighting + row filtering', workers, seconds: r.timings.filter });
      log(`fdk: ${workers} worker(s): ${seconds.toFixed(2)} s`);
      centralSliceError = brainError(r.volume);
    } finally {
      ws.dispose();
    }
  }
  const workers = Math.min(2, availableParallelism());
  const crop = cropDetector(geometry, 256);
  const cut = new Float32Array(360 * 384 * 256);
  for (let r = 0; r < 360 * 384; r++) cut.set(data.subarray(r * 512 + crop.first, r * 512 + crop.first + 256), r * 256);
  const truncated = { geometry: crop.geometry, data: cut, muWater: sheppLogan3d('original').muWater };
  const ws = await openWorkspace(workers);
  try {
    // The same scan as calibrated views with the panel leaning 1e-9 out of the orbit plane: the
    // general backprojector, which recomputes the detector column and weight for every voxel.
    let t = now();
    const leaning = await fdk3d(ws, { geometry: asCalibratedViews(geometry, 1e-9), data }, { grid });
    rows.push({ name: `FDK backprojection (${leaning.backprojector}, same scan as calibrated views)`, workers, seconds: leaning.timings.backproject, mupdPerS: updates / leaning.timings.backproject / 1e6 });
    log(`fdk: general backprojector: ${(now() - t).toFixed(2)} s`);
    t = now();
    await fdk3d(ws, truncated, { grid });
    rows.push({ name: 'FDK, 256 of 512 channels, no extension', workers, seconds: now() - t });
    t = now();
    const plan = await planConeExtension(truncated, 'water');
    const planned = now() - t;
    const r = await fdk3d(ws, truncated, { grid, extension: coneRowExtension(plan, 256) });
    rows.push({ name: `FDK, 256 of 512 channels, water extension (+${plan.left + plan.right} ch)`, workers, seconds: now() - t });
    rows.push({ name: 'water extension: planning (row-wise edge fits)', workers, seconds: planned });
    rows.push({ name: 'water extension: weighting + extension + filter', workers, seconds: r.timings.filter });
    log(`fdk: truncated problem with water extension: ${(now() - t).toFixed(2)} s`);
  } finally {
    ws.dispose();
  }
  const peakRssMb = process.resourceUsage().maxRSS / 1024;
  const text = [
    `FDK problem: ${problem}`,
    ...rows.map((r) => `${r.name.padEnd(54)} ${String(r.workers).padStart(2)} worker(s)  ${(r.seconds * 1000).toFixed(0).padStart(6)} ms${r.mupdPerS ? `  ${r.mupdPerS.toFixed(0).padStart(5)} M voxel-view updates/s` : ''}${r.cpuSeconds !== undefined ? `  (processor time ${r.cpuSeconds.toFixed(1)} s)` : ''}`),
    `FDK central slice, brain: mean error ${(centralSliceError * 100).toFixed(2)}% against the table`,
    `peak resident memory after the FDK section: ${peakRssMb.toFixed(0)} MB (targets: FDK under 10 s with 2 workers, below 1500 MB)`,
  ].join('\n');
  return { problem, rows, centralSliceError, peakRssMb, text };
}
