// The same job through the command line (build/cli.mjs): the demo scan simulated with the page's
// settings, FBP with the page's default recipe on the ground-truth grid, and the comparison.
// The page must agree with it: same engine, but storage, workers and memory modes differ.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseFloatNrrd } from './files.mjs';

export function cliReference(root) {
  const dir = mkdtempSync(join(tmpdir(), 'rimfill-cli-'));
  const f = (x) => join(dir, x);
  const cli = (...args) => execFileSync(process.execPath, [join(root, 'bin/rimfill.js'), ...args], { encoding: 'utf8' });
  cli('simulate', '--phantom', 'thorax', '--geometry', 'demo', '--channels', '345', '--photons', '200000', '--seed', '7',
    '--out', f('scan.nrrd'), '--truth', f('truth.nrrd'), '--size', '576', '--pixel', '1');
  cli('reconstruct', f('scan.nrrd'), '--method', 'fbp', '--filter', 'ramp', '--size', '576', '--pixel', '1', '--out', f('fbp.nrrd'));
  const comparison = JSON.parse(cli('compare', f('fbp.nrrd'), '--reference', f('truth.nrrd'), '--scan', f('scan.nrrd'), '--fov', '--json'));
  return { comparison, fbp: parseFloatNrrd(readFileSync(f('fbp.nrrd'))), dir };
}
