// The network-prior pipeline: reconstruction on the model grid -> normalize -> network ->
// de-normalize -> resample, with test networks whose output is known exactly.
import { beforeAll, describe, expect, it } from 'vitest';
import { consistencyReport } from '../../web/core/consistency/consistency-report';
import type { Workspace } from '../../web/core/engine/workspace';
import { InputError } from '../../web/core/errors';
import { squareGrid } from '../../web/core/image';
import { validateModelInfo, type ModelInfo } from '../../web/core/model/description';
import { networkInputRecipe } from '../../web/core/model/network-input';
import { networkPrior, type InputReconstructor } from '../../web/core/model/network-prior';
import { writeOnnxModel } from '../../web/cli/bench/onnx-writer';
import { rasterize, type EllipsePhantom } from '../../web/core/phantoms/ellipse';
import { runRecipe } from '../../web/core/recipe/run';
import { resampleBilinear } from '../../web/core/resample';
import type { Scan } from '../../web/core/scan';
import { diskImage, FALSE_DISK } from '../helpers/disk';
import { localWorkspace } from '../helpers/engine';
import { expectDiskLocalized } from '../helpers/localization';
import { addImageModel, identityModel, openNetworkNode } from '../helpers/networks';
import { truncatedThoraxScan } from '../helpers/truncated-thorax';

function info(input: Record<string, unknown>, output: Record<string, unknown> = {}): ModelInfo {
  return validateModelInfo({
    format: 'rimfill-model/1',
    input: { name: 'image', quantity: 'mu', from: { method: 'fbp' }, ...input },
    output: { name: 'prior', quantity: 'mu', ...output },
  });
}

function maxAbsDiff(a: Float32Array, b: Float32Array): number {
  expect(a.length).toBe(b.length);
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

describe('network prior', () => {
  let ws: Workspace;
  let scan: Scan;
  let phantom: EllipsePhantom;
  let reconstruct: InputReconstructor;
  const recon = squareGrid(200, 3);

  beforeAll(async () => {
    ws = await localWorkspace();
    ({ scan, phantom } = truncatedThoraxScan());
    reconstruct = (recipe, hooks) => runRecipe(ws, scan, recipe, hooks);
  });

  it('identity network on the reconstruction grid: the prior is the FBP itself', async () => {
    const net = await openNetworkNode(identityModel());
    const r = await networkPrior(scan, info({}), net, recon, reconstruct);
    const fbp = await runRecipe(ws, scan, networkInputRecipe(info({}), recon));
    expect(r.prior.grid).toEqual(recon);
    expect(maxAbsDiff(r.prior.data, fbp.image.data)).toBe(0);
    expect(r.report.inputGrid).toEqual(recon);
    await net.dispose();
  });

  it.each<[string, Record<string, unknown>, (mw: number) => Record<string, unknown>]>([
    ['mu with scale and offset', { scale: 50, offset: -1 }, () => ({ scale: 50, offset: -1 })],
    ['HU with scale 1/1000', { quantity: 'hu', scale: 0.001 }, () => ({ quantity: 'hu', scale: 0.001 })],
    // value = 0.002 * 1000 (mu - mw) / mw + 3 = mu (2 / mw) + 1: read back as mu * scale + offset.
    ['HU in, mu out', { quantity: 'hu', scale: 0.002, offset: 3 }, (mw) => ({ quantity: 'mu', scale: 2 / mw, offset: 1 })],
  ])('identity network with normalization (%s) returns its input to 1e-6 of mu', async (_, input, output) => {
    const net = await openNetworkNode(identityModel());
    const r = await networkPrior(scan, info(input, output(scan.muWater!)), net, recon, reconstruct);
    expect(maxAbsDiff(r.prior.data, r.input.data)).toBeLessThan(1e-6);
    await net.dispose();
  });

  it('a model grid of its own: input reconstructed there, output resampled onto the reconstruction grid', async () => {
    const net = await openNetworkNode(identityModel());
    const r = await networkPrior(scan, info({ size: 120, pixel: 4 }), net, recon, reconstruct);
    expect(r.input.grid).toEqual(squareGrid(120, 4));
    expect(r.output.grid).toEqual(squareGrid(120, 4));
    expect(maxAbsDiff(r.prior.data, resampleBilinear(r.output.data, r.output.grid, recon))).toBe(0);
    // size alone: the reconstruction's field over `size` pixels.
    const s = await networkPrior(scan, info({ size: 100 }), net, recon, reconstruct);
    expect(s.input.grid).toEqual(squareGrid(100, 6));
    await net.dispose();
  });

  it('HU normalization needs mu_water', async () => {
    const net = await openNetworkNode(identityModel());
    await expect(networkPrior({ ...scan, muWater: undefined }, info({ quantity: 'hu' }), net, recon, reconstruct)).rejects.toThrow(/input\.quantity: "hu" needs the scan's mu_water/);
    await net.dispose();
  });

  it('a network output with NaN or infinite values is refused, with the count', async () => {
    // x / 0 is infinite (or NaN where x = 0): an untrustworthy output.
    const dims = [1, 1, 'H', 'W'];
    const bytes = writeOnnxModel({
      inputs: [{ name: 'image', dims }],
      outputs: [{ name: 'prior', dims }],
      initializers: [{ name: 'zero', dims: [1], data: new Float32Array(1) }],
      nodes: [{ op: 'Div', inputs: ['image', 'zero'], outputs: ['prior'] }],
    });
    const net = await openNetworkNode(bytes);
    const err = await networkPrior(scan, info({}), net, recon, reconstruct).catch((e) => e);
    expect(err).toBeInstanceOf(InputError);
    expect(err.message).toMatch(/network output "prior": 40000 of 40000 values are NaN or infinite/);
    await net.dispose();
  });

  it('an output of two channels is refused when the network runs', async () => {
    const bytes = writeOnnxModel({
      inputs: [{ name: 'image', dims: [1, 1, 'H', 'W'] }],
      outputs: [{ name: 'prior' }],
      nodes: [{ op: 'Concat', inputs: ['image', 'image'], outputs: ['prior'], attributes: { axis: { int: 1 } } }],
    });
    const net = await openNetworkNode(bytes);
    await expect(networkPrior(scan, info({}), net, recon, reconstruct)).rejects.toThrow(/network output "prior": got dimensions \[1, 2, 200, 200\], expected \[1, 1, H, W\]/);
    await net.dispose();
  });

  it('cancel before the network runs rejects and returns nothing', async () => {
    const net = await openNetworkNode(identityModel());
    const ctl = new AbortController();
    const hooks = { signal: ctl.signal, onProgress: (f: number) => (f >= 0.4 ? ctl.abort() : undefined) };
    await expect(networkPrior(scan, info({}), net, recon, reconstruct, hooks)).rejects.toThrow(/cancelled/);
    await net.dispose();
  });

  it('bright-disk network on a truncated thorax scan: output exact, disagreement localized to the rays through the disk', async () => {
    // The network adds a constant image K = truth + disk - input to its input (Add with a
    // constant initializer): a restoration that is right except for a false bright disk.
    const size = 400, pixel = 1.5;
    const desc = info({ size, pixel });
    const grid = squareGrid(size, pixel);
    const input = await runRecipe(ws, scan, networkInputRecipe(desc, grid));
    const truth = rasterize(phantom, grid, 4);
    const disk = diskImage(FALSE_DISK, grid);
    const wanted = truth.map((v, i) => v + disk[i]);
    const net = await openNetworkNode(addImageModel(wanted.map((v, i) => v - input.image.data[i]), size));
    const r = await networkPrior(scan, desc, net, recon, reconstruct);
    expect(maxAbsDiff(r.output.data, wanted)).toBeLessThan(1e-5);
    const report = await consistencyReport(ws, scan, r.output);
    expectDiskLocalized(report, scan.geometry, FALSE_DISK, 2 * pixel + 2.5);
    await net.dispose();
  });
});
