// rimfill demo: the whole job on the built-in demo scan: simulate a truncated scan of the
// thorax phantom, inspect it, reconstruct it without and with each detector extension, and
// compare every result with the ground truth and with the measured data.
import { accessSync, constants, mkdirSync } from 'node:fs';
import { InputError } from '../../core/errors';
import { demoKnowledge } from '../../core/knowledge/demo';
import { join } from 'node:path';
import type { Comparison } from '../../core/compare';
import type { DataResidual } from '../../core/data-residual';
import { methodAndCorrection } from '../../core/recipe/label';
import { EXTEND_METHODS } from '../../core/truncation/extend-methods';
import { parseArgs } from '../args';
import { simulate } from './simulate';
import { reconstruct } from './reconstruct';
import { compare } from './compare';
import { inspect } from './inspect';
import { coneDemo } from './demo-cone';
import type { CommandResult } from './types';

/** The demo's folder when --dir is not given. */
export const DEMO_DIR = 'rimfill-demo';

/** Creates the demo's folder (and its parents) and checks it can be written, before any work. */
function demoFolder(dir: string): void {
  try {
    mkdirSync(dir, { recursive: true });
    accessSync(dir, constants.W_OK);
  } catch (err) {
    throw new InputError(`option --dir: cannot create or write the folder ${dir} (${(err as NodeJS.ErrnoException).code ?? String(err)})`);
  }
}

export const demoHelp = `rimfill demo [--dir folder] [--json]
  Simulates a truncated scan of the thorax phantom (detector covering about 60% of the body
  width), reconstructs it by FBP without and with each detector extension (${EXTEND_METHODS.join(', ')})
  and from the complete scan, and compares each with the truth (inside and outside the
  measured field of view, cupping) and with the measured data. Then the same for a cone-beam
  C-arm scan of the 3D thorax (demo-cone, binned to 4 mm cells and 2-degree steps): FDK with
  each extension, compared inside and outside the FOV cylinder. Files go to --dir
  (default ${DEMO_DIR}, which the repository's .gitignore covers when run from its top folder).`;

type Row = { name: string; comparison: Comparison; residual: DataResidual };

function table(rows: Row[]): string {
  const head = ['reconstruction', 'RMSE in FOV (HU)', 'SSIM in FOV', 'RMSE outside (HU)', 'cupping excess', 'data residual'];
  const cells = rows.map((r) => {
    const c = r.comparison;
    return [
      r.name,
      c.regions.insideFov ? c.regions.insideFov.rmse.toFixed(1) : 'n/a',
      c.regions.insideFov ? c.regions.insideFov.ssim.toFixed(4) : 'n/a',
      c.regions.outsideFov ? c.regions.outsideFov.rmse.toFixed(1) : 'n/a',
      c.cupping ? `${(100 * c.cupping.excess).toFixed(1)}%` : 'n/a',
      `${(100 * r.residual.relative).toFixed(2)}%`,
    ];
  });
  const all = [head, ...cells];
  const w = head.map((_, i) => Math.max(...all.map((r) => r[i].length)));
  return all.map((r) => r.map((s, i) => (i ? s.padStart(w[i]) : s.padEnd(w[i]))).join('  ')).join('\n');
}

export async function demo(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, { dir: 'string', json: 'flag' }, 0);
  const dir = (a.options.dir as string | undefined) ?? DEMO_DIR;
  demoFolder(dir);
  const f = (name: string) => join(dir, name);
  const log: string[] = [];
  const grid = ['--size', '576', '--pixel', '1'];
  const sim = await simulate(['--phantom', 'thorax', '--geometry', 'demo', '--channels', '345', '--photons', '200000', '--seed', '7',
    '--out', f('scan.nrrd'), '--complete', f('scan-complete.nrrd'), '--truth', f('truth.nrrd'), ...grid]);
  log.push(sim.text);
  const fov = String((sim.json as { fovRadiusMm: number }).fovRadiusMm);
  log.push((await inspect([f('scan.nrrd')])).text);
  const rows: Row[] = [];
  // What a user might know of the demo thorax, the same knowledge the page's demo offers.
  const { region, outline: tape } = demoKnowledge();
  const knownHeart = `${region.x},${region.y},${region.r}:${region.hu}`;
  const outline = `ellipse:${tape.cx},${tape.cy},${tape.a},${tape.b}`;
  const jobs: Array<[string, string, string[], string]> = [
    ...EXTEND_METHODS.map((m) => [`truncated scan: ${methodAndCorrection({ method: 'fbp', extend: m })}`, 'scan.nrrd', ['--extend', m], `fbp-extend-${m}.nrrd`] as [string, string, string[], string]),
    [`truncated scan: FBP, water cylinder, known region (${region.label}, ${region.hu} HU)`, 'scan.nrrd', ['--extend', 'water', '--known', knownHeart], 'fbp-known-region.nrrd'],
    [`truncated scan: FBP, outline (drawn ellipse)`, 'scan.nrrd', ['--outline', outline], 'fbp-outline.nrrd'],
    [`complete scan: ${methodAndCorrection({ method: 'fbp' })}`, 'scan-complete.nrrd', [], 'fbp-complete.nrrd'],
  ];
  for (const [name, scan, extra, file] of jobs) {
    const out = f(file);
    log.push((await reconstruct([f(scan), '--method', 'fbp', '--filter', 'shepp-logan', ...extra, ...grid, '--out', out, '--json'])).text);
    // Every image is judged inside the truncated scan's FOV, and against the data it came from.
    const c = await compare([out, '--reference', f('truth.nrrd'), '--scan', f(scan), '--fov-radius', fov, '--json']);
    const json = c.json as Comparison & { residual: DataResidual };
    rows.push({ name, comparison: json, residual: json.residual });
  }
  log.push('', 'FBP of the truncated scan without and with detector extension, with what a user knows (a region of known HU, the outline), and of the complete scan, against the truth:', table(rows));
  const cone = await coneDemo(dir);
  log.push('', ...cone.log);
  return {
    json: { dir, results: Object.fromEntries(rows.map((r) => [r.name, { ...r.comparison, residual: { ...r.residual, perViewRms: undefined } }])), cone: cone.results },
    text: log.join('\n'),
  };
}
