// rimfill reconstruct with the iterative methods: options, --json report, the prior from a file
// or from FBP, and bad input (one clear error, nothing written).
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { reconstruct } from '../../web/cli/commands/reconstruct';
import { simulate } from '../../web/cli/commands/simulate';
import { InputError } from '../../web/core/errors';
import { readImageNrrd } from '../helpers/read-nrrd';

let dir: string;
const f = (name: string) => join(dir, name);

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rimfill-iter-'));
  writeFileSync(f('geom.json'), JSON.stringify({
    kind: 'fan', detector: { shape: 'flat', channels: 120, rows: 1, pitch: [1, 1], offset: [0, 0] },
    sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 4, count: 90 },
  }));
  // The modified Shepp-Logan phantom is 92 mm across; 120 channels see 33 mm around the centre.
  await simulate(['--phantom', 'shepp-logan-modified', '--geometry', f('geom.json'), '--out', f('scan.nrrd'),
    '--truth', f('truth.nrrd'), '--size', '48', '--pixel', '4', '--photons', '1e5']);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

type Report = {
  iterations: number;
  history: { residual: number[]; tv: number[] };
  residual: { perViewRms: number[] };
  prior?: { departure: { insideFov: { rmsHu: number } } };
};

describe('rimfill reconstruct, iterative methods', () => {
  it('sart with options: writes the image and reports the convergence history', async () => {
    const r = await reconstruct([f('scan.nrrd'), '--method', 'sart', '--iterations', '3', '--subsets', '9', '--relaxation', '0.8',
      '--size', '48', '--pixel', '4', '--workers', '1', '--out', f('sart.nrrd'), '--json']);
    const json = r.json as { recipe: Record<string, unknown>; report: Report };
    expect(json.recipe).toMatchObject({ method: 'sart', iterations: 3, subsets: 9, relaxation: 0.8 });
    expect(json.report.history.residual).toHaveLength(3);
    expect(json.report.history.tv).toHaveLength(3);
    expect(json.report.residual.perViewRms).toHaveLength(90);
    expect(r.text).toMatch(/3 iterations \(stopped by iterations\), measured-data residual [\d.]+% of its start/);
    const img = await readImageNrrd(new Uint8Array(readFileSync(f('sart.nrrd'))));
    expect(img.grid.nx).toBe(48);
    expect(Math.max(...img.data)).toBeGreaterThan(0);
  });

  it('prior from an image file and from FBP of the scan', async () => {
    const a = await reconstruct([f('scan.nrrd'), '--method', 'prior', '--prior', f('truth.nrrd'), '--iterations', '2', '--tv-steps', '5',
      '--workers', '1', '--out', f('prior.nrrd'), '--json']);
    const ja = a.json as { grid: { nx: number; dx: number }; report: Report };
    // No --size: the grid covers the prior's extent (48 x 4 mm) with 512 pixels.
    expect(ja.grid.nx).toBe(512);
    expect(ja.grid.dx).toBeCloseTo(192 / 512, 9);
    expect(ja.report.prior!.departure.insideFov.rmsHu).toBeGreaterThanOrEqual(0);
    const b = await reconstruct([f('scan.nrrd'), '--method', 'prior', '--prior', 'fbp', '--filter', 'hann', '--size', '48', '--pixel', '4',
      '--iterations', '2', '--workers', '1', '--out', f('prior-fbp.nrrd'), '--json']);
    const jb = b.json as { recipe: { prior: unknown } };
    expect(jb.recipe.prior).toEqual({ source: 'recipe', recipe: { method: 'fbp', filter: 'hann', extend: 'none', grid: { size: 48, pixel: 4 } } });
    expect(existsSync(f('prior-fbp.nrrd'))).toBe(true);
    // --extend goes to the prior's recipe (water-extrapolated FBP as the prior).
    const c = await reconstruct([f('scan.nrrd'), '--method', 'prior', '--prior', 'fbp', '--extend', 'water', '--size', '48', '--pixel', '4',
      '--iterations', '1', '--workers', '1', '--out', f('prior-water.nrrd'), '--json']);
    const jc = c.json as { recipe: { extend?: string; prior: { recipe: { extend: string } } } };
    expect(jc.recipe.prior.recipe.extend).toBe('water');
    expect(jc.recipe.extend ?? 'none').toBe('none');
  });

  it.each([
    [['--method', 'fbp', '--iterations', '3'], /option --iterations: only for the iterative methods/],
    [['--method', 'sart', '--prior', 'x.nrrd'], /options --prior, --model, --model-info: only for --method prior, not --method sart/],
    [['--method', 'sart', '--extend', 'water'], /option --extend: got "water" for method "sart", expected "none"/],
    [['--method', 'prior', '--prior', 'missing.nrrd'], /option --prior: got "missing.nrrd", expected an image file or folder that exists, or a method \(fbp, sart, tv, wtv\)/],
    [['--method', 'prior', '--prior', 'prior'], /option --prior: got "prior", expected an image file or folder that exists, or a method \(fbp, sart, tv, wtv\)/],
    [['--method', 'prior', '--prior', 'banana'], /option --prior: got "banana"/],
    [['--method', 'prior', '--model', 'net.onnx'], /needs --prior image.nrrd, or --model net.onnx with --model-info net.json \(both\)/],
    [['--method', 'tv', '--support', 'oval'], /option --support: got "oval", expected disk, grid or a mask image/],
    [['--method', 'wtv', '--tv-eps', '0'], /option --tv-eps: got 0/],
  ])('%j: a clear error and nothing written', async (args, message) => {
    const out = f(`bad-${args.join('-')}.nrrd`);
    await expect(reconstruct([f('scan.nrrd'), ...args, '--size', '48', '--pixel', '4', '--workers', '1', '--out', out])).rejects.toThrow(message);
    await expect(reconstruct([f('scan.nrrd'), ...args, '--size', '48', '--pixel', '4', '--workers', '1', '--out', out])).rejects.toBeInstanceOf(InputError);
    expect(existsSync(out)).toBe(false);
  });
});
