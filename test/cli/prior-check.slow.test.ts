// rimfill prior-check end to end through the built CLI (bin/rimfill.js): a network runs on the
// scan, its prior and the residual sinogram are written, and the consistency is reported; a
// network whose input does not fit its description is refused with exit code 2.
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readImageNrrd } from '../helpers/read-nrrd';
import { parseNrrd } from '../../web/core/formats/nrrd';
import { rimfill } from '../helpers/cli';
import { writePriorCheckFiles } from '../helpers/prior-check-files';

let dir: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rimfill-prior-'));
  await writePriorCheckFiles(dir);
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('rimfill prior-check (built CLI)', () => {
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


  it('refuses a network whose input does not fit its description, with exit code 2 and nothing written', () => {
    const before = readdirSync(dir).sort();
    const r = rimfill(['prior-check', 'scan.nrrd', '--model', 'fixed64.onnx', '--model-info', 'net150.json', '--out', 'bad-prior.nrrd'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/model input "image": shape \[1, 1, 64, 64\] has H \(rows\) = 64, but the description's input.size is 150/);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(readdirSync(dir).sort()).toEqual(before);
    expect(existsSync(join(dir, 'bad-prior.nrrd'))).toBe(false);
  });
});
