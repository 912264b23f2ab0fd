// The files the prior-check tests work on: a truncated thorax scan (90 views, 345 channels), the
// exact phantom as an image, identity test networks and their descriptions, a file that is not a
// model.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { writeImageNrrd } from '../../web/core/formats/image-nrrd';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { squareGrid } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { identityModel } from './networks';
import { truncatedThoraxScan } from './truncated-thorax';

const description = (size?: number) => ({
  format: 'rimfill-model/1',
  name: 'identity test network',
  input: { name: 'image', quantity: 'hu', scale: 0.001, offset: 0, ...(size ? { size, pixel: 4 } : {}), from: { method: 'fbp', extend: 'none' } },
  output: { name: 'prior', quantity: 'hu', scale: 0.001, offset: 0 },
});

/** Writes scan.nrrd, truth.nrrd, net.onnx, fixed64.onnx, net.json, net150.json and notes.txt into `dir`. */
export async function writePriorCheckFiles(dir: string): Promise<void> {
  const { scan, phantom } = truncatedThoraxScan(90);
  writeFileSync(join(dir, 'scan.nrrd'), await writeScanNrrd(scan));
  const grid = squareGrid(150, 4);
  writeFileSync(join(dir, 'truth.nrrd'), await writeImageNrrd({ grid, data: rasterize(phantom, grid, 2), quantity: 'mu', muWater: phantom.muWater }));
  writeFileSync(join(dir, 'net.onnx'), identityModel());
  writeFileSync(join(dir, 'fixed64.onnx'), identityModel([1, 1, 64, 64]));
  writeFileSync(join(dir, 'net.json'), JSON.stringify(description()));
  writeFileSync(join(dir, 'net150.json'), JSON.stringify(description(150)));
  writeFileSync(join(dir, 'notes.txt'), 'not a model');
}
