// The cone-beam part of rimfill demo: the 'demo-cone' C-arm scan of the 3D thorax (truncated
// by its 118 mm FOV radius), binned to 4 mm cells and 2-degree steps so that it runs in seconds,
// reconstructed by FDK without and with each detector extension and compared with the truth
// inside and outside the FOV cylinder.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { VolumeComparison } from '../../core/compare-volume';
import { presetGeometry } from '../../core/geometry/presets';
import { methodAndCorrection } from '../../core/recipe/label';
import { EXTEND_METHODS } from '../../core/truncation/extend-methods';
import { compare } from './compare';
import { reconstruct } from './reconstruct';
import { simulate } from './simulate';

/** demo-cone with 4 mm cells (96 x 72) and 100 views 2 degrees apart (the same 200-degree arc). */
export function binnedDemoCone(): unknown {
  const g = presetGeometry('demo-cone')!;
  return { ...g, detector: { ...g.detector, channels: 96, rows: 72, pitch: [4, 4] }, anglesDeg: { start: 0, step: 2, count: 100 } };
}

function table(rows: Array<[string, VolumeComparison]>): string {
  const head = ['reconstruction', 'RMSE in FOV (HU)', 'SSIM in FOV', 'RMSE outside (HU)'];
  const cells = rows.map(([name, c]) => [
    name,
    c.regions.insideFov ? c.regions.insideFov.rmse.toFixed(1) : 'n/a',
    c.regions.insideFov ? c.regions.insideFov.ssim.toFixed(4) : 'n/a',
    c.regions.outsideFov ? c.regions.outsideFov.rmse.toFixed(1) : 'n/a',
  ]);
  const all = [head, ...cells];
  const w = head.map((_, i) => Math.max(...all.map((r) => r[i].length)));
  return all.map((r) => r.map((s, i) => (i ? s.padStart(w[i]) : s.padEnd(w[i]))).join('  ')).join('\n');
}

/** Runs the cone-beam demo in `dir`; returns its log lines and the comparisons by reconstruction. */
export async function coneDemo(dir: string): Promise<{ log: string[]; results: Record<string, VolumeComparison> }> {
  const f = (name: string) => join(dir, name);
  writeFileSync(f('cone-geometry.json'), JSON.stringify(binnedDemoCone(), null, 1));
  const log: string[] = [];
  const grid = ['--size', '152', '--pixel', '4', '--slices', '50', '--slice-spacing', '4'];
  const sim = await simulate(['--phantom', 'thorax', '--geometry', f('cone-geometry.json'), '--photons', '200000', '--seed', '7',
    '--out', f('cone-scan.nrrd'), '--truth', f('cone-truth.nrrd'), '--size', '152', '--pixel', '4', '--slices', '50']);
  log.push(sim.text);
  const rows: Array<[string, VolumeComparison]> = [];
  for (const m of EXTEND_METHODS) {
    const out = f(`fdk-extend-${m}.nrrd`);
    log.push((await reconstruct([f('cone-scan.nrrd'), '--method', 'fbp', '--filter', 'shepp-logan', '--extend', m, ...grid, '--out', out])).text);
    rows.push([methodAndCorrection({ method: 'fbp', extend: m }).replace(/^FBP/, 'FDK'), (await compare([out, '--reference', f('cone-truth.nrrd'), '--fov', '--json'])).json as VolumeComparison]);
  }
  log.push('', 'FDK of the truncated cone-beam scan (C-arm, FOV cylinder 118 mm radius) against the truth:', table(rows));
  return { log, results: Object.fromEntries(rows) };
}
