// The cone-beam demo job through the command line (build/cli.mjs): the page's cone demo (the
// 'demo-cone' C-arm scan binned to 2 mm cells and 1-degree steps, 3D thorax, 200 000 photons,
// seed 7, truth on 3 mm voxels), FDK with water extension on the page's grid, and the volume
// comparison in the FOV cylinder. The page must agree with it.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/** web/worker/demo-cone-scan.ts coneDemoGeometry(CONE_DEMO), written out. */
export const CONE_DEMO_GEOMETRY = {
  kind: 'cone', detector: { shape: 'flat', channels: 192, rows: 144, pitch: [2, 2], offset: [0, 0] },
  sourceIsocenter: 750, sourceDetector: 1200, anglesDeg: { start: 0, step: 1, count: 200 },
};

export function coneReference(root) {
  const dir = mkdtempSync(join(tmpdir(), 'rimfill-cli-cone-'));
  const f = (x) => join(dir, x);
  const cli = (...args) => execFileSync(process.execPath, [join(root, 'bin/rimfill.js'), ...args], { encoding: 'utf8' });
  writeFileSync(f('cone.json'), JSON.stringify(CONE_DEMO_GEOMETRY));
  cli('simulate', '--phantom', 'thorax', '--geometry', f('cone.json'), '--photons', '200000', '--seed', '7',
    '--out', f('scan.nrrd'), '--truth', f('truth.nrrd'), '--size', '196', '--pixel', '3', '--slices', '67');
  cli('reconstruct', f('scan.nrrd'), '--method', 'fbp', '--filter', 'ramp', '--extend', 'water', '--size', '196', '--pixel', '3', '--out', f('fdk.nrrd'));
  const comparison = JSON.parse(cli('compare', f('fdk.nrrd'), '--reference', f('truth.nrrd'), '--fov', '--json'));
  return { comparison, dir };
}
