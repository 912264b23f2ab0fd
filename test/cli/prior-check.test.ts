// rimfill prior-check, main() in this process: an image as the prior, JSON out; bad models
// refused with exit code 2, one line on stderr and nothing written. The built CLI runs a network
// end to end, and refuses one whose input does not fit its description (the network runtime's
// own reading), in prior-check.slow.test.ts.
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { rimfillHere as rimfill } from '../helpers/cli-in-process';
import { writePriorCheckFiles } from '../helpers/prior-check-files';

let dir: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rimfill-prior-'));
  await writePriorCheckFiles(dir);
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('rimfill prior-check', () => {
  it('checks an image file as the prior: the exact phantom agrees with the data', async () => {
    const r = await rimfill(['prior-check', 'scan.nrrd', '--prior', 'truth.nrrd', '--json'], dir);
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.source).toBe('image');
    expect(j.consistency.relativeRms).toBeLessThan(0.02);
    const t = await rimfill(['prior-check', 'scan.nrrd', '--prior', 'truth.nrrd'], dir);
    expect(t.stdout).toMatch(/^prior: image truth\.nrrd\nconsistency: relative RMS residual \d+\.\d\d% on 31050 measured rays/);
  });

  it.each([
    [['--model', 'notes.txt', '--model-info', 'net.json'], /^rimfill prior-check: model file: not an ONNX model/],
    [['--model', 'net.onnx', '--model-info', 'scan.nrrd'], /model description: not valid JSON/],
    [['--model', 'net.onnx'], /needs --prior image.nrrd, or --model net.onnx with --model-info net.json/],
    [['--prior', 'truth.nrrd', '--model', 'net.onnx', '--model-info', 'net.json'], /--prior and --model\/--model-info exclude each other/],
  ])('refuses %j with exit code 2 and writes nothing', async (opts, message) => {
    const before = readdirSync(dir).sort();
    const r = await rimfill(['prior-check', 'scan.nrrd', ...opts, '--out', 'bad-prior.nrrd', '--residual', 'bad-residual.nrrd'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(readdirSync(dir).sort()).toEqual(before);
    expect(existsSync(join(dir, 'bad-prior.nrrd'))).toBe(false);
  });

  it('--out needs a network', async () => {
    const r = await rimfill(['prior-check', 'scan.nrrd', '--prior', 'truth.nrrd', '--out', 'x.nrrd'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/option --out: writes the network prior, so it needs --model/);
  });
});
