// The network runtime (onnxruntime-web, WebAssembly CPU backend, in Node) on networks built in
// the tests: each output is compared with the same operation computed directly.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { ORT_VERSION } from '../../web/core/model/ort-runtime';
import { seededRandom } from '../../web/core/simulate/noise';
import { addImageModel, identityModel, openNetworkNode, smoothingModel } from '../helpers/networks';

function randomImage(n: number, seed: number): Float32Array {
  const rnd = seededRandom(seed);
  return Float32Array.from({ length: n }, () => rnd() * 0.04 - 0.005);
}

function maxAbsDiff(a: Float32Array, b: Float32Array): number {
  expect(a.length).toBe(b.length);
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

describe('network runtime (onnxruntime-web in Node)', () => {
  it('pins the runtime version it embeds', () => {
    const pkg = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8'));
    const ortPkg = JSON.parse(readFileSync(new URL('../../node_modules/onnxruntime-web/package.json', import.meta.url), 'utf8'));
    expect(pkg.dependencies['onnxruntime-web']).toBe(ORT_VERSION);
    expect(ortPkg.version).toBe(ORT_VERSION);
  });

  it('reads the graph inputs and outputs: names, element types and shapes', async () => {
    const net = await openNetworkNode(identityModel([1, 1, 'H', 64], 'fbp_in', 'restored'));
    expect(net.signature.inputs).toEqual([{ name: 'fbp_in', isTensor: true, type: 'float32', shape: [1, 1, 'H', 64] }]);
    expect(net.signature.outputs).toEqual([{ name: 'restored', isTensor: true, type: 'float32', shape: [1, 1, 'H', 64] }]);
    await net.dispose();
  });

  it('identity network: output equals input on a non-square image', async () => {
    const [ny, nx] = [29, 37];
    const x = randomImage(nx * ny, 1);
    const net = await openNetworkNode(identityModel());
    const out = await net.run('image', 'prior', { data: x, dims: [1, 1, ny, nx] });
    expect(out.dims).toEqual([1, 1, ny, nx]);
    expect(maxAbsDiff(out.data, x)).toBe(0);
    await net.dispose();
  });

  it('3 x 3 convolution network: matches the convolution computed directly to 1e-5', async () => {
    // ONNX Conv computes a cross-correlation (no kernel flip; ONNX operator spec, "Conv"):
    // y[i, j] = sum_{a, b} x[i + a - 1, j + b - 1] k[a, b], zero outside the image for pads 1.
    // An asymmetric kernel makes a flipped or transposed kernel fail.
    const k = Float32Array.from([0.05, 0.1, 0.0, 0.2, 0.4, 0.05, 0.0, 0.15, 0.05]);
    const [ny, nx] = [33, 40];
    const x = randomImage(nx * ny, 2);
    const expected = new Float32Array(nx * ny);
    for (let i = 0; i < ny; i++) {
      for (let j = 0; j < nx; j++) {
        let s = 0;
        for (let a = 0; a < 3; a++) {
          for (let b = 0; b < 3; b++) {
            const ii = i + a - 1, jj = j + b - 1;
            if (ii >= 0 && ii < ny && jj >= 0 && jj < nx) s += x[ii * nx + jj] * k[a * 3 + b];
          }
        }
        expected[i * nx + j] = s;
      }
    }
    const net = await openNetworkNode(smoothingModel(k));
    const out = await net.run('image', 'prior', { data: x, dims: [1, 1, ny, nx] });
    expect(out.dims).toEqual([1, 1, ny, nx]);
    expect(maxAbsDiff(out.data, expected)).toBeLessThan(1e-5);
    await net.dispose();
  });

  it('bright-disk network: output equals input plus the disk image to 1e-5', async () => {
    const n = 48;
    const disk = new Float32Array(n * n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if ((i - 30) ** 2 + (j - 14) ** 2 < 36) disk[i * n + j] = 0.01;
    const x = randomImage(n * n, 3);
    const net = await openNetworkNode(addImageModel(disk, n));
    const out = await net.run('image', 'prior', { data: x, dims: [1, 1, n, n] });
    const expected = x.map((v, i) => v + disk[i]);
    expect(maxAbsDiff(out.data, expected)).toBeLessThan(1e-5);
    await net.dispose();
  });

  it('a run the model cannot take (wrong size for a fixed-size model) is refused with the reason', async () => {
    const net = await openNetworkNode(identityModel([1, 1, 16, 16]));
    await expect(net.run('image', 'prior', { data: new Float32Array(64), dims: [1, 1, 8, 8] })).rejects.toThrow(/did not run on a 1 x 1 x 8 x 8 input/);
    await net.dispose();
  });

  it.each([
    ['an NRRD file', new TextEncoder().encode('NRRD0004\ntype: float\ndimension: 2\nsizes: 2 2\nencoding: raw\n\n\0\0\0\0')],
    ['random bytes', Uint8Array.from({ length: 256 }, (_, i) => (i * 73 + 11) & 255)],
    ['a truncated model', identityModel().subarray(0, 40)],
  ])('%s is refused as "not an ONNX model"', async (_, bytes) => {
    const err = await openNetworkNode(bytes).catch((e) => e);
    expect(err).toBeInstanceOf(InputError);
    expect(err.message).toMatch(/^model file: not an ONNX model \(the runtime could not parse it/);
  });

  it('an empty file is refused', async () => {
    await expect(openNetworkNode(new Uint8Array(0))).rejects.toThrow(/model file: empty/);
  });
});
