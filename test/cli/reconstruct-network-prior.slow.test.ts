// rimfill reconstruct --method prior --model net.onnx --model-info net.json end to end: the
// network runs on the scan, its output is the prior of the data-consistent method, and --json
// reports the consistency of the prior and of the result. Two test networks return the thorax
// phantom, one of them with a false bright disk inside the FOV: the result keeps less than 20%
// of the disk's contrast (the project's acceptance bar), and the prior's disagreement is gone from the result.
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readImageNrrd } from '../helpers/read-nrrd';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { squareGrid } from '../../web/core/image';
import { validateModelInfo } from '../../web/core/model/description';
import { networkInputRecipe } from '../../web/core/model/network-input';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { runRecipe } from '../../web/core/recipe/run';
import { rimfill } from '../helpers/cli';
import { contrastKept, diskImage, type Disk } from '../helpers/disk';
import { localWorkspace } from '../helpers/engine';
import { addImageModel } from '../helpers/networks';
import { truncatedThoraxScan } from '../helpers/truncated-thorax';

const SIZE = 120, PIXEL = 4.8; // 576 mm: the whole phantom with its arms
const grid = squareGrid(SIZE, PIXEL);
const DISK: Disk = { cx: -30, cy: -20, r: 18, value: 0.01 }; // about +500 HU, inside the FOV (radius 102 mm)
const description = { format: 'rimfill-model/1', name: 'test restoration', input: { name: 'image', quantity: 'mu', size: SIZE, pixel: PIXEL, from: { method: 'fbp', extend: 'water' } }, output: { name: 'prior', quantity: 'mu' } };
let dir: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rimfill-netprior-'));
  const { scan, phantom } = truncatedThoraxScan(120);
  writeFileSync(join(dir, 'scan.nrrd'), await writeScanNrrd(scan));
  const ws = await localWorkspace(1);
  const input = (await runRecipe(ws, scan, networkInputRecipe(validateModelInfo(description), grid))).image.data;
  const truth = rasterize(phantom, grid, 4);
  const disk = diskImage(DISK, grid);
  writeFileSync(join(dir, 'clean.onnx'), addImageModel(truth.map((v, i) => v - input[i]), SIZE));
  writeFileSync(join(dir, 'disk.onnx'), addImageModel(truth.map((v, i) => v + disk[i] - input[i]), SIZE));
  writeFileSync(join(dir, 'net.json'), JSON.stringify(description));
}, 120_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

const run = (model: string, out: string) =>
  rimfill(['reconstruct', 'scan.nrrd', '--method', 'prior', '--model', model, '--model-info', 'net.json', '--size', String(SIZE), '--pixel', String(PIXEL), '--out', out, '--json'], dir);

describe('rimfill reconstruct --method prior with a network', () => {
  it('reports the consistency of the network\'s output and of the result, and removes the false disk', async () => {
    const withDisk = run('disk.onnx', 'disk.nrrd');
    expect(withDisk.code, withDisk.stderr).toBe(0);
    const j = JSON.parse(withDisk.stdout);
    expect(j.report.priorSource).toMatchObject({ source: 'network', model: { name: 'test restoration' } });
    // The prior is checked on the network's own grid, the result on the reconstruction grid.
    expect(j.consistency.prior.grid).toEqual(grid);
    expect(j.consistency.prior.perView.rms).toHaveLength(120);
    // Measured: 4030 rays flagged in the prior (3.0%), 140 in the result (1.4%); 0.5% of the disk's contrast kept.
    expect(j.consistency.prior.flaggedRays).toBeGreaterThan(1000);
    expect(j.consistency.result.flaggedRays).toBeLessThan(0.05 * j.consistency.prior.flaggedRays);
    expect(j.consistency.result.relativeRms).toBeLessThan(j.consistency.prior.relativeRms);

    const clean = run('clean.onnx', 'clean.nrrd');
    expect(clean.code, clean.stderr).toBe(0);
    const a = (await readImageNrrd(readFileSync(join(dir, 'clean.nrrd')))).data;
    const b = (await readImageNrrd(readFileSync(join(dir, 'disk.nrrd')))).data;
    const { kept, pixels } = contrastKept(b, a, DISK, grid);
    expect(pixels).toBeGreaterThan(40);
    expect(Math.abs(kept)).toBeLessThan(0.2 * DISK.value);
  });

  it('the summary line gives both figures', () => {
    const r = rimfill(['reconstruct', 'scan.nrrd', '--method', 'prior', '--model', 'disk.onnx', '--model-info', 'net.json', '--size', String(SIZE), '--pixel', String(PIXEL), '--iterations', '2', '--out', 'short.nrrd'], dir);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/consistency with the measured data: prior \d+\.\d\d% \(\d+ rays disagree\), result \d+\.\d\d% \(\d+ rays disagree\)/);
  });

  it('refuses a network without its description, with exit code 2 and nothing written', () => {
    const r = rimfill(['reconstruct', 'scan.nrrd', '--method', 'prior', '--model', 'disk.onnx', '--out', 'none.nrrd'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--model net\.onnx with --model-info net\.json \(both\)/);
    expect(existsSync(join(dir, 'none.nrrd'))).toBe(false);
  });
});
