// rimfill export --dicom: a reconstruction (its recipe label travels in the image file) and a
// DICOM slice out as DICOM CT series, read back by Rimfill's reader and by dicom-parser; bad
// input exits 2 with one line and writes nothing.
import { copyFileSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import * as dicomParser from 'dicom-parser';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readDicomSeries } from '../../web/core/formats/dicom';
import { readImageFile } from '../../web/core/formats/read-image';
import { writeVolumeNrrd } from '../../web/core/formats/volume-nrrd';
import { rimfill } from '../helpers/cli';

const dir = mkdtempSync(join(tmpdir(), 'rimfill-dicom-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const f = (name: string) => join(dir, name);
const series = (folder: string) => readdirSync(f(folder)).sort().map((name) => ({ name, bytes: new Uint8Array(readFileSync(join(f(folder), name))) }));

beforeAll(async () => {
  copyFileSync(new URL('../fixtures/frames/ct-small.dcm', import.meta.url), f('ct.dcm'));
  const geom = { kind: 'fan', detector: { channels: 120, pitch: [2, 2] }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 4, count: 90 } };
  writeFileSync(f('geom.json'), JSON.stringify(geom));
  expect(rimfill(['simulate', '--phantom', 'water', '--geometry', 'geom.json', '--out', 'scan.nrrd', '--size', '48', '--pixel', '4'], dir).code).toBe(0);
  const grid = { nx: 8, ny: 6, nz: 4, dx: 1.5, dy: 1.5, dz: 3, cx: 0, cy: 0, cz: 10 };
  writeFileSync(f('volume.nrrd'), await writeVolumeNrrd({ grid, data: Float32Array.from({ length: 192 }, (_, i) => 0.02 + i * 1e-5), quantity: 'mu', muWater: 0.02, description: 'FDK, water extension' }));
});

describe('rimfill export --dicom', () => {
  it('a reconstruction in HU: one file, the recipe label as series description, HU to the rescale step', async () => {
    const rec = rimfill(['reconstruct', 'scan.nrrd', '--method', 'fbp', '--size', '48', '--pixel', '4', '--hu', '--out', 'fbp.nrrd'], dir);
    expect(rec.code, rec.stderr).toBe(0);
    const r = rimfill(['export', 'fbp.nrrd', '--dicom', '--to', 'fbp-dicom', '--json'], dir);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).written).toHaveLength(1);
    const files = series('fbp-dicom');
    const d = dicomParser.parseDicom(files[0].bytes);
    expect(d.string('x0008103e')).toBe('FBP, no correction, ramp, 48 px x 4 mm');
    const back = readDicomSeries(files).volume;
    const src = (await readImageFile([{ name: 'fbp.nrrd', bytes: new Uint8Array(readFileSync(f('fbp.nrrd'))) }])).volume;
    expect([back.nx, back.ny, back.nz]).toEqual([48, 48, 1]);
    for (let i = 0; i < src.data.length; i++) expect(Math.abs(back.data[i] - src.data[i])).toBeLessThanOrEqual(0.5);
    expect(back.origin[0]).toBeCloseTo(src.origin[0], 4);
    expect(back.origin[1]).toBeCloseTo(src.origin[1], 4);
  });

  it('a mu volume (mu_water from the file): a series of one file per slice', () => {
    const r = rimfill(['export', 'volume.nrrd', '--dicom', '--to', 'vol', '--json'], dir);
    expect(r.code, r.stderr).toBe(0); // the file records mu_water
    const files = series('vol');
    expect(files.map((x) => x.name)).toEqual(['CT0001.dcm', 'CT0002.dcm', 'CT0003.dcm', 'CT0004.dcm']);
    const back = readDicomSeries(files).volume;
    expect(back.nz).toBe(4);
    expect(back.spacing[2]).toBeCloseTo(3, 6);
    expect(back.origin[2]).toBeCloseTo(10 - 1.5 * 3, 6);
    // mu = 0.02 + i 1e-5 is HU = 1000 (mu - 0.02) / 0.02 = 0.5 i.
    for (let i = 0; i < 192; i++) expect(Math.abs(back.data[i] - 0.5 * i)).toBeLessThanOrEqual(0.5);
    expect(dicomParser.parseDicom(files[0].bytes).string('x0008103e')).toBe('FDK, water extension');
  });

  it('a DICOM slice keeps its patient and study', () => {
    const r = rimfill(['export', 'ct.dcm', '--dicom', '--to', 'ct-out', '--description', 'copy'], dir);
    expect(r.code, r.stderr).toBe(0);
    const d = dicomParser.parseDicom(series('ct-out')[0].bytes);
    expect(d.string('x00100010')).toBe('CompressedSamples^CT1');
    expect(d.string('x0008103e')).toBe('copy');
  });

  it.each([
    [['export', 'ct.dcm', '--dicom', '--to', 'taken'], /the folder .*taken already holds 1 \.dcm files/],
    [['export', 'ct.dcm', '--dicom', '--to', 'x', '--slice', '0'], /option --slice: not with --dicom/],
    [['export', 'ct.dcm', '--to', 'x.nrrd', '--description', 'y'], /option --description: only with --dicom/],
    [['export', 'mu.nrrd', '--dicom', '--to', 'x'], /values are mu; give mu_water/],
  ])('bad input %j: exit 2, one line, nothing written', async (args, message) => {
    mkdirSync(f('taken'), { recursive: true });
    writeFileSync(f('taken/CT0001.dcm'), 'x');
    const mu = (await readImageFile([{ name: 'v.nrrd', bytes: new Uint8Array(readFileSync(f('volume.nrrd'))) }])).volume;
    writeFileSync(f('mu.nrrd'), await writeVolumeNrrd({ grid: { nx: mu.nx, ny: mu.ny, nz: mu.nz, dx: 1, dy: 1, dz: 1, cx: 0, cy: 0, cz: 0 }, data: mu.data, quantity: 'mu' }));
    const before = JSON.stringify([readdirSync(dir).sort(), readdirSync(f('taken'))]);
    const r = rimfill(args as string[], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(message);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(JSON.stringify([readdirSync(dir).sort(), readdirSync(f('taken'))])).toBe(before);
  });
});
