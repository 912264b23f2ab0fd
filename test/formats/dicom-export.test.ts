// DICOM CT export read back: by Rimfill's own reader (values, grid, positions, what was carried)
// and by dicom-parser element by element (the attributes of the CT Image IOD, DICOM PS3.3 A.3,
// that an importing system relies on). pydicom reads the same files in dicom-export.ref.test.ts.
import { readFileSync } from 'node:fs';
import * as dicomParser from 'dicom-parser';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { readDicomSeries } from '../../web/core/formats/dicom';
import { ds, rescaleFor, writeDicomSeries } from '../../web/core/formats/dicom-write';
import { newUid } from '../../web/core/formats/dicom-uid';
import type { ImageVolume } from '../../web/core/formats/volume';

const ctSmall = () => readDicomSeries([{ name: 'ct-small.dcm', bytes: new Uint8Array(readFileSync(new URL('../fixtures/frames/ct-small.dcm', import.meta.url))) }]).volume;

/** A small HU volume with fractional values, a bright voxel at the patient's left-anterior-superior corner. */
function volume(): ImageVolume {
  const [nx, ny, nz] = [6, 5, 3];
  const data = Float32Array.from({ length: nx * ny * nz }, (_, i) => -1000 + i * 13.37);
  data[(nz - 1) * nx * ny + (ny - 1) * nx + (nx - 1)] = 3000;
  return { nx, ny, nz, spacing: [0.8, 0.7, 2.5], origin: [-10, -4, 30], data, quantity: 'hu', format: 'NRRD' };
}

const parse = (bytes: Uint8Array) => dicomParser.parseDicom(bytes);

describe('DICOM CT export', () => {
  it('a DICOM slice round-trips: same HU, grid and position, same patient, study and frame; a new series', () => {
    const src = ctSmall();
    const out = writeDicomSeries({ volume: src, description: 'FBP, ramp, water extension', now: new Date(2024, 5, 11, 9, 30, 5) });
    expect(out.files.map((f) => f.name)).toEqual(['CT0001.dcm']);
    const back = readDicomSeries(out.files).volume;
    expect([back.nx, back.ny, back.nz]).toEqual([src.nx, src.ny, src.nz]);
    for (let k = 0; k < 3; k++) {
      expect(back.spacing[k]).toBeCloseTo(src.spacing[k], 6);
      expect(back.origin[k]).toBeCloseTo(src.origin[k], 4);
    }
    expect(back.data).toEqual(src.data); // whole HU, rescale step 1
    expect(back.dicom).toEqual(src.dicom);
    expect(src.dicom?.PatientName).toBe('CompressedSamples^CT1');
    const d = parse(out.files[0].bytes), orig = parse(new Uint8Array(readFileSync(new URL('../fixtures/frames/ct-small.dcm', import.meta.url))));
    expect(d.string('x0020000d')).toBe(orig.string('x0020000d')); // Study Instance UID
    expect(d.string('x00200052')).toBe(orig.string('x00200052')); // Frame of Reference UID
    expect(d.string('x0020000e')).not.toBe(orig.string('x0020000e')); // a new series
    expect(d.string('x00080008')).toBe('DERIVED\\SECONDARY\\AXIAL');
    expect(d.string('x0008103e')).toBe('FBP, ramp, water extension');
    expect(d.string('x00082111')).toBe('Rimfill reconstruction: FBP, ramp, water extension');
    expect(d.string('x00080023')).toBe('20240611');
  });

  it('a volume: one instance per slice, positions in LPS, HU within half the rescale step', () => {
    const v = volume();
    const out = writeDicomSeries({ volume: v, description: 'FDK, 1 known region', derivation: 'FDK, 1 known region; knowledge: known region 1 (circle at 0, 0 mm, r 5 mm, 0 HU)' });
    expect(out.files).toHaveLength(3);
    expect(parse(out.files[0].bytes).string('x00082111')).toBe('Rimfill reconstruction: FDK, 1 known region; knowledge: known region 1 (circle at 0, 0 mm, r 5 mm, 0 HU)');
    expect(out.rescale).toEqual({ slope: 1, intercept: 0 });
    const back = readDicomSeries([...out.files].reverse()).volume; // sorted by position, not by name
    expect([back.nx, back.ny, back.nz]).toEqual([6, 5, 3]);
    expect(back.origin.map((x) => Number(x.toFixed(6)))).toEqual([-10, -4, 30]);
    expect(back.spacing.map((x) => Number(x.toFixed(6)))).toEqual([0.8, 0.7, 2.5]);
    for (let i = 0; i < v.data.length; i++) expect(Math.abs(back.data[i] - v.data[i])).toBeLessThanOrEqual(0.5);
    // Slice k's first stored pixel is its most anterior row's patient-right end: LPS (x0, -(y0 + (ny-1) dy), z0 + k dz).
    out.files.forEach((f, k) => {
      const d = parse(f.bytes);
      expect(d.string('x00200032')!.split('\\').map(Number)).toEqual([-10, -(-4 + 4 * 0.7), 30 + 2.5 * k].map((x) => Number(ds(x))));
      expect(d.string('x00200037')).toBe('1\\0\\0\\0\\1\\0');
      expect(d.string('x00280030')).toBe('0.7\\0.8'); // row spacing (dy), then column spacing (dx)
      expect(d.string('x00180050')).toBe('2.5');
      expect(d.intString('x00200013')).toBe(k + 1);
      expect(d.string('x00100010') ?? '').toBe(''); // no patient data: the input carried none
      expect(d.elements.x00100010).toBeDefined(); // present and empty (Type 2)
    });
    // The bright voxel (left, anterior, superior corner) is the last slice's first row, last column.
    const last = parse(out.files[2].bytes);
    const px = last.elements.x7fe00010;
    expect(new DataView(out.files[2].bytes.buffer, out.files[2].bytes.byteOffset + px.dataOffset).getInt16(2 * 5, true)).toBe(3000);
  });

  it('values beyond 16 bits of whole HU are stored in coarser steps and come back within half a step', () => {
    const v = volume();
    v.data[0] = 90000;
    const out = writeDicomSeries({ volume: v, description: 'x' });
    expect(out.rescale.slope).toBeGreaterThan(1);
    expect(out.warnings.join(' ')).toMatch(/stored in steps of/);
    const back = readDicomSeries(out.files).volume;
    for (let i = 0; i < v.data.length; i++) expect(Math.abs(back.data[i] - v.data[i])).toBeLessThanOrEqual(out.rescale.slope / 2 + 1e-3);
  });

  it('refuses what DICOM cannot hold, naming it', () => {
    const nan = volume();
    nan.data[4] = NaN;
    expect(() => writeDicomSeries({ volume: nan, description: 'x' })).toThrow(/DICOM export: 1 of 90 values are not finite numbers/);
    expect(() => writeDicomSeries({ volume: { ...volume(), quantity: 'mu' }, description: 'x' })).toThrow(InputError);
  });

  it('UIDs are 2.25 and a UUID as one decimal integer, at most 64 characters, all different', () => {
    const out = writeDicomSeries({ volume: volume(), description: 'x' });
    const uids = out.files.map((f) => parse(f.bytes).string('x00080018')!);
    for (const u of [...uids, out.seriesUid]) {
      expect(u).toMatch(/^2\.25\.(0|[1-9]\d*)$/);
      expect(u.length).toBeLessThanOrEqual(64);
      expect(BigInt(u.slice(5))).toBeLessThan(2n ** 128n);
    }
    expect(new Set(uids).size).toBe(3);
    // Version 4 and variant bits (RFC 4122 4.4): a UUID of all-zero random bytes.
    expect(newUid((n) => new Uint8Array(n))).toBe(`2.25.${((0x40n << 72n) | (0x80n << 56n)).toString()}`);
  });

  it('rescale and decimal strings follow the value representations', () => {
    expect(rescaleFor(-1024, 3071)).toEqual({ slope: 1, intercept: 0 });
    expect(ds(0.6614680290222168)).toBe('0.66146802902222'); // DS: 16 characters at most
    expect(ds(-179.03579711914062).length).toBeLessThanOrEqual(16);
  });
});
