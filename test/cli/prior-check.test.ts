// rimfill prior-check end to end: a network or an image as the prior, JSON and files out; bad
// models refused with exit code 2, one line on stderr and nothing written.
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readImageNrrd, writeImageNrrd } from '../../web/core/formats/image-nrrd';
import { parseNrrd } from '../../web/core/formats/nrrd';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { squareGrid } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { rimfill } from '../helpers/cli';
import { identityModel } from '../helpers/networks';
import { truncatedThoraxScan } from '../helpers/truncated-thorax';

let dir: string;
const description = (size?: number) => ({
  format: 'rimfill-model/1',
  name: 'identity test network',
  input: { name: 'image', quantity: 'hu', scale: 0.001, offset: 0, ...(size ? { size, pixel: 4 } : {}), from: { method: 'fbp', extend: 'none' } },
  output: { name: 'prior', quantity: 'hu', scale: 0.001, offset: 0 },
});

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rimfill-prior-'));
  const { scan, phantom } = truncatedThoraxScan(90);
  writeFileSync(join(dir, 'scan.nrrd'), await writeScanNrrd(scan));
  const grid = squareGrid(150, 4);
  writeFileSync(join(dir, 'truth.nrrd'), await writeImageNrrd({ grid, data: rasterize(phantom, grid, 2), quantity: 'mu', muWater: phantom.muWater }));
  writeFileSync(join(dir, 'net.onnx'), identityModel());
  writeFileSync(join(dir, 'fixed64.onnx'), identityModel([1, 1, 64, 64]));
  writeFileSync(join(dir, 'net.json'), JSON.stringify(description()));
  writeFileSync(join(dir, 'net150.json'), JSON.stringify(description(150)));
  writeFileSync(join(dir, 'notes.txt'), 'not a model');
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('rimfill prior-check', () => {
  it('runs a network on the scan, writes its prior and the residual sinogram, and reports consistency', async () => {
    const r = rimfill(['prior-check', 'scan.nrrd', '--model', 'net.onnx', '--model-info', 'net.json', '--size', '128', '--pixel', '4', '--out', 'prior.nrrd', '--residual', 'residual.nrrd', '--json'], dir);
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.source).toBe('network');
    expect(j.model.name).toBe('identity test network');
    expect(j.consistency.views).toBe(90);
    expect(j.consistency.channels).toBe(345);
    expect(j.consistency.perView.rms).toHaveLength(90);
    // An identity network returns the truncated FBP: far from explaining the measured rays.
    expect(j.consistency.relativeRms).toBeGreaterThan(0.05);
    const prior = await readImageNrrd(readFileSync(join(dir, 'prior.nrrd')));
    expect(prior.grid.nx).toBe(128);
    const res = await parseNrrd(readFileSync(join(dir, 'residual.nrrd')));
    expect(res.sizes).toEqual([345, 1, 90]);
    expect(res.keys['rimfill.quantity']).toBe('residual-line-integral');
  });

  it('checks an image file as the prior: the exact phantom agrees with the data', () => {
    const r = rimfill(['prior-check', 'scan.nrrd', '--prior', 'truth.nrrd', '--json'], dir);
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.source).toBe('image');
    expect(j.consistency.relativeRms).toBeLessThan(0.02);
    const t = rimfill(['prior-check', 'scan.nrrd', '--prior', 'truth.nrrd'], dir);
    expect(t.stdout).toMatch(/^prior: image truth\.nrrd\nconsistency: relative RMS residual \d+\.\d\d% on 31050 measured rays/);
  });

  it.each([
    [['--model', 'notes.txt', '--model-info', 'net.json'], /^rimfill prior-check: model file: not an ONNX model/],
    [['--model', 'fixed64.onnx', '--model-info', 'net150.json'], /model input "image": shape \[1, 1, 64, 64\] has H \(rows\) = 64, but the description's input.size is 150/],
    [['--model', 'net.onnx', '--model-info', 'scan.nrrd'], /model description: not valid JSON/],
    [['--model', 'net.onnx'], /needs --prior image.nrrd, or --model net.onnx with --model-info net.json/],
    [['--prior', 'truth.nrrd', '--model', 'net.onnx', '--model-info', 'net.json'], /--prior and --model\/--model-info exclude each other/],
  ])('refuses %j with exit code 2 and writes nothing', (opts, message) => {
    const before = readdirSync(dir).sort();
    const r = rimfill(['prior-check', 'scan.nrrd', ...opts, '--out', 'bad-prior.nrrd', '--residual', 'bad-residual.nrrd'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(readdirSync(dir).sort()).toEqual(before);
    expect(existsSync(join(dir, 'bad-prior.nrrd'))).toBe(false);
  });

  it('--out needs a network', () => {
    const r = rimfill(['prior-check', 'scan.nrrd', '--prior', 'truth.nrrd', '--out', 'x.nrrd'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/option --out: writes the network prior, so it needs --model/);
  });
});
