// The network-prior job through the command line, for the page to agree with: the test
// networks are written here (test-models.ts, bundled by esbuild), the bright-disk network is
// fitted to the demo scan's water-extended FBP on its grid, and `rimfill prior-check` reports
// the consistency of its output. The same image (phantom + disk) is also written as an NRRD file
// (by hand: Teem NRRD format spec) for the page's image-file prior, with its own prior-check.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { build } from 'esbuild';
import { parseFloatNrrd } from './files.mjs';

/** Writes the networks into `dir` (the CLI reference's folder, holding scan.nrrd) and runs prior-check. */
export async function priorReference(root, dir) {
  const f = (x) => join(dir, x);
  await build({ entryPoints: [join(root, 'test/browser/test-models.ts')], bundle: true, format: 'esm', platform: 'node', outfile: f('test-models.mjs'), logLevel: 'warning' });
  const m = await import(pathToFileURL(f('test-models.mjs')).href);
  const cli = (...args) => execFileSync(process.execPath, [join(root, 'bin/rimfill.js'), ...args], { encoding: 'utf8' });
  cli('reconstruct', f('scan.nrrd'), '--method', 'fbp', '--extend', 'water', '--size', String(m.MODEL_SIZE), '--pixel', String(m.MODEL_PIXEL), '--out', f('net-input.nrrd'));
  const input = parseFloatNrrd(readFileSync(f('net-input.nrrd')));
  const fbp = input.data;
  const files = {
    disk: { onnx: f('bright-disk.onnx'), json: f('bright-disk.json') },
    wrongSize: { onnx: f('wrong-size.onnx'), json: f('wrong-size.json') },
  };
  writeFileSync(files.disk.onnx, m.brightDiskModel(fbp));
  writeFileSync(files.disk.json, m.description('Bright-disk test network'));
  // A model fixed to 128 x 128 pixels whose description promises the 288-pixel grid.
  writeFileSync(files.wrongSize.onnx, m.fixedIdentityModel(128));
  writeFileSync(files.wrongSize.json, m.description('Wrong-size test network'));
  const check = JSON.parse(cli('prior-check', f('scan.nrrd'), '--model', files.disk.onnx, '--model-info', files.disk.json, '--json'));
  files.imagePrior = f('disk-prior.nrrd');
  writeFileSync(files.imagePrior, floatNrrd(m.truthWithDisk(), m.MODEL_SIZE, m.MODEL_PIXEL));
  const imageCheck = JSON.parse(cli('prior-check', f('scan.nrrd'), '--prior', files.imagePrior, '--json'));
  return { files, check, imageCheck, disk: m.DISK, muWater: Number(input.keys['rimfill.muWater']) };
}

/** A square image in mu as an attached raw little-endian float NRRD, centred on the isocentre. */
function floatNrrd(data, size, pixel) {
  const o = -((size - 1) / 2) * pixel;
  const header = `NRRD0004\ntype: float\ndimension: 2\nsizes: ${size} ${size}\nendian: little\nencoding: raw\n`
    + `space dimension: 2\nspace directions: (${pixel},0) (0,${pixel})\nspace origin: (${o},${o})\nrimfill.quantity:=mu\n\n`;
  return Buffer.concat([Buffer.from(header, 'latin1'), Buffer.from(data.buffer, data.byteOffset, data.byteLength)]);
}
