// Test networks for the browser tests, bundled for Node by esbuild when the tests start
// (prior-reference.mjs): written with the project's ONNX writer, with known behaviour.
import { gridOrigin, squareGrid } from '../../web/core/image';
import { writeOnnxModel } from '../../web/cli/bench/onnx-writer';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { thorax } from '../../web/core/phantoms/thorax';

/** The model grid: the demo's 576 mm field in 2 mm pixels. */
export const MODEL_SIZE = 288;
export const MODEL_PIXEL = 2;

/** A false structure in the heart (muscle, centre (4, 30) mm), inside the demo scan's field of view (radius 102 mm): +0.01 /mm, about +500 HU. */
export const DISK = { cx: 4, cy: 30, r: 12, value: 0.01 };

/** The description of a network on the model grid fed with water-extended FBP (mu in and out). */
export function description(name: string, size = MODEL_SIZE): string {
  return JSON.stringify({
    format: 'rimfill-model/1',
    name,
    notes: 'Browser-test network: a restoration that is right except for a false bright disk.',
    input: { name: 'image', quantity: 'mu', size, pixel: MODEL_PIXEL, from: { method: 'fbp', extend: 'water' } },
    output: { name: 'prior', quantity: 'mu' },
  }, null, 2);
}

/** The thorax phantom plus the false disk on the model grid (mu, 1/mm): what the bright-disk network returns. */
export function truthWithDisk(): Float32Array {
  const grid = squareGrid(MODEL_SIZE, MODEL_PIXEL);
  const out = rasterize(thorax(), grid, 4);
  const { x0, y0 } = gridOrigin(grid);
  for (let j = 0; j < MODEL_SIZE; j++) {
    for (let i = 0; i < MODEL_SIZE; i++) {
      if ((x0 + i * MODEL_PIXEL - DISK.cx) ** 2 + (y0 + j * MODEL_PIXEL - DISK.cy) ** 2 < DISK.r ** 2) out[j * MODEL_SIZE + i] += DISK.value;
    }
  }
  return out;
}

/**
 * output = input + (truth + disk - fbp): fed with the demo scan's water-extended FBP on the
 * model grid (`fbp`, as the command line makes it), it returns the thorax phantom plus a false disk.
 */
export function brightDiskModel(fbp: Float32Array): Uint8Array {
  const wanted = truthWithDisk();
  const addend = wanted.map((v, k) => v - fbp[k]);
  const dims = [1, 1, MODEL_SIZE, MODEL_SIZE];
  return writeOnnxModel({
    inputs: [{ name: 'image', dims }],
    outputs: [{ name: 'prior', dims }],
    initializers: [{ name: 'addend', dims, data: addend }],
    nodes: [{ op: 'Add', inputs: ['image', 'addend'], outputs: ['prior'] }],
  });
}

/** output = input, with a fixed input size (refused when the description names another size). */
export function fixedIdentityModel(size: number): Uint8Array {
  const dims = [1, 1, size, size];
  return writeOnnxModel({ inputs: [{ name: 'image', dims }], outputs: [{ name: 'prior', dims }], nodes: [{ op: 'Identity', inputs: ['image'], outputs: ['prior'] }] });
}
