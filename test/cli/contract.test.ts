// The command-line contract (README, "Command line"): --json prints one JSON object; exit 0 ok, 2 bad input
// with one line on stderr and nothing written, 1 internal error.
import { mkdtempSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { rimfill } from '../helpers/cli';

let dir: string;
const geom = {
  kind: 'fan', detector: { shape: 'flat', channels: 200, rows: 1, pitch: [2, 2], offset: [0, 0] },
  sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 4, count: 90 },
};

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'rimfill-cli-'));
  writeFileSync(join(dir, 'geom.json'), JSON.stringify(geom));
  const r = rimfill(['simulate', '--phantom', 'shepp-logan', '--geometry', 'geom.json', '--out', 'scan.nrrd', '--truth', 'truth.nrrd', '--size', '64', '--pixel', '3', '--json'], dir);
  expect(r.code, r.stderr).toBe(0);
});

describe('rimfill CLI contract', () => {
  it('simulate, reconstruct and compare run end to end and print JSON', () => {
    const rec = rimfill(['reconstruct', 'scan.nrrd', '--method', 'fbp', '--size', '64', '--pixel', '3', '--out', 'image.nrrd', '--json'], dir);
    expect(rec.code, rec.stderr).toBe(0);
    const j = JSON.parse(rec.stdout);
    expect(j.grid.nx).toBe(64);
    const cmp = rimfill(['compare', 'image.nrrd', '--reference', 'truth.nrrd', '--fov', '--json'], dir);
    expect(cmp.code, cmp.stderr).toBe(0);
    const c = JSON.parse(cmp.stdout);
    expect(c.unit).toBe('HU');
    expect(c.regions.insideFov.ssim).toBeGreaterThan(0.3);
    expect(c.regions.insideFov.rmse).toBeGreaterThan(0);
    const ins = rimfill(['inspect', 'scan.nrrd', '--json'], dir);
    expect(JSON.parse(ins.stdout).views).toHaveLength(90);
  });

  it.each([
    [['reconstruct', 'scan.nrrd', '--method', 'magic', '--out', 'x.nrrd'], /--method: got "magic"/],
    [['reconstruct', 'scan.nrrd', '--method', 'fbp', '--out', 'x.nrrd', '--size', 'ten', '--pixel', '1'], /--size: got "ten", expected a number/],
    [['reconstruct', 'missing.nrrd', '--method', 'fbp', '--out', 'x.nrrd'], /missing\.nrrd: cannot open/],
    [['reconstruct', 'geom.json', '--method', 'fbp', '--out', 'x.nrrd'], /geom\.raw: cannot open/],
    [['reconstruct', 'scan.nrrd', '--method', 'fbp', '--out', 'x.nrrd', '--frobnicate'], /unknown option --frobnicate/],
    [['reconstruct', 'scan.nrrd', '--method', 'fbp', '--out', 'x.nrrd', '--band-limit', '-3'], /option --band-limit: got -3, expected line pairs per cm at the isocentre/],
    [['reconstruct', 'scan.nrrd', '--method', 'fbp', '--out', 'x.nrrd', '--cutoff', '0.5'], /unknown option --cutoff/],
    [['simulate', '--phantom', 'unicorn', '--geometry', 'geom.json', '--out', 'x.nrrd'], /phantom: got "unicorn"/],
    [['simulate', '--phantom', 'water', '--geometry', 'nope', '--out', 'x.nrrd'], /geometry: got "nope"/],
    [['simulate', '--phantom', 'water', '--geometry', 'geom.json', '--channels', '500', '--out', 'x.nrrd'], /channels: got 500/],
    [['compare', 'scan.nrrd', '--reference', 'truth.nrrd'], /image rimfill.quantity: got "line-integral", expected mu or hu/],
    [['frobnicate'], /unknown command "frobnicate"/],
    // The command's name once, not "rimfill compare: compare: ...".
    [['compare'], /^rimfill compare: give the image file/],
    [['inspect'], /^rimfill inspect: give the scan file/],
    [['reconstruct', 'scan.nrrd', '--method', 'fbp', '--out', 'x.nrrd', '--size', '1e999', '--pixel', '1'], /--size: got "1e999", which is not a finite number/],
  ])('bad input %j: exit 2, one line on stderr, nothing written', (args, msg) => {
    const before = readdirSync(dir).sort();
    const r = rimfill(args as string[], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(msg);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stdout).toBe('');
    expect(readdirSync(dir).sort()).toEqual(before);
  });

  it('a damaged scan file is refused without writing', () => {
    writeFileSync(join(dir, 'bad.nrrd'), 'NRRD0004\ntype: float\ndimension: 3\nsizes: 200 1 90\nencoding: raw\nrimfill.geometry:={}\n\n1234');
    const before = readdirSync(dir).sort();
    const r = rimfill(['reconstruct', 'bad.nrrd', '--method', 'fbp', '--out', 'x.nrrd'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/geometry\.kind|promises/);
    expect(readdirSync(dir).sort()).toEqual(before);
  });
});
