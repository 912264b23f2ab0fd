// rimfill demo: the whole job on the built-in demo scan: simulate a truncated scan of the
// thorax phantom, reconstruct it, and compare with the ground truth.
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from '../args';
import { simulate } from './simulate';
import { reconstruct } from './reconstruct';
import { compare } from './compare';
import { inspect } from './inspect';
import type { CommandResult } from './types';

export const demoHelp = `rimfill demo [--dir folder]
  Simulates a truncated scan of the thorax phantom (detector covering about 60% of the body
  width), reconstructs it and compares the result with the truth. Files go to --dir
  (default rimfill-demo).`;

export async function demo(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, { dir: 'string', json: 'flag' }, 0);
  const dir = (a.options.dir as string | undefined) ?? 'rimfill-demo';
  mkdirSync(dir, { recursive: true });
  const f = (name: string) => join(dir, name);
  const log: string[] = [];
  const step = (r: CommandResult) => {
    log.push(r.text);
    return r;
  };
  step(await simulate(['--phantom', 'thorax', '--geometry', 'demo', '--channels', '345', '--photons', '200000', '--seed', '7',
    '--out', f('scan.nrrd'), '--complete', f('scan-complete.nrrd'), '--truth', f('truth.nrrd'), '--size', '576', '--pixel', '1']));
  step(await inspect([f('scan.nrrd')]));
  const results: Record<string, unknown> = {};
  for (const [name, scan] of [['truncated', 'scan.nrrd'], ['complete', 'scan-complete.nrrd']] as const) {
    step(await reconstruct([f(scan), '--method', 'fbp', '--filter', 'shepp-logan', '--size', '576', '--pixel', '1', '--out', f(`fbp-${name}.nrrd`)]));
    log.push(`-- FBP of the ${name} scan against the truth:`);
    const c = step(await compare([f(`fbp-${name}.nrrd`), '--reference', f('truth.nrrd'), '--fov-radius', '102']));
    results[name] = c.json;
  }
  return { json: { dir, results }, text: log.join('\n') };
}
