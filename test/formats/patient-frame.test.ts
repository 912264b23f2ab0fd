// Files that name their frame land where the DICOM they came from lands. The fixtures
// (test/fixtures/frames, scripts/reference/dicom_frames.py) are pydicom's CT_small.dcm and its
// pydicom decode written as NRRD in named patient frames by a plain-Python writer following the
// NRRD specification (Teem, "Definition of NRRD File Format", section 4); DICOM's patient frame
// is left-posterior-superior (PS3.3 C.7.6.2.1.1). Rimfill reads the DICOM into its own frame
// (x left, y anterior, z superior), so a NRRD whose `space` is honoured must match it pixel for
// pixel, and one whose `space` were ignored would be upside down.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { readImageFile } from '../../web/core/formats/read-image';
import type { ImageVolume } from '../../web/core/formats/volume';
import { writeImageFile } from '../../web/core/formats/write-image';
import { imageAsMu, volumeSlice } from '../../web/core/formats/volume';
import { rmse } from '../../web/core/metrics';

const fixture = (name: string) => new Uint8Array(readFileSync(new URL(`../fixtures/frames/${name}`, import.meta.url)));
const read = async (name: string, bytes: Uint8Array = fixture(name)) => (await readImageFile([{ name, bytes }])).volume;

function sameGrid(a: ImageVolume, b: ImageVolume): void {
  expect([a.nx, a.ny, a.nz]).toEqual([b.nx, b.ny, b.nz]);
  for (let k = 0; k < 2; k++) {
    expect(a.spacing[k]).toBeCloseTo(b.spacing[k], 6);
    expect(a.origin[k]).toBeCloseTo(b.origin[k], 4);
  }
}

describe('NRRD space and the DICOM it came from', () => {
  it.each(['ct-small-lps.nrrd', 'ct-small-ras.nrrd', 'ct-small-lps-3d.nrrd'])('%s matches the DICOM at under 0.5 HU RMSE', async (name) => {
    const dicom = await read('ct-small.dcm');
    const nrrd = await read(name);
    sameGrid(nrrd, dicom);
    expect(nrrd.origin[2]).toBeCloseTo(dicom.origin[2], 4); // the slice's own z
    expect(rmse(nrrd.data, dicom.data)).toBeLessThan(0.5);
  });

  it('a pixel lands at its patient position: DICOM row r, column c at LPS (px + c dx, py + r dy)', async () => {
    // CT_small.dcm: Image Position (Patient) (-158.135803, -179.035797, -75.699997), 0.661468 mm.
    const nrrd = await read('ct-small-lps.nrrd');
    const bytes = fixture('ct-small-lps.nrrd');
    const body = new DataView(bytes.buffer, bytes.length - 128 * 128 * 2);
    const [r, c] = [20, 90];
    const stored = body.getInt16(2 * (r * 128 + c), true);
    const lpsY = -179.035797 + r * 0.661468;
    const i = Math.round((-158.135803 + c * 0.661468 - nrrd.origin[0]) / nrrd.spacing[0]);
    const j = Math.round((-lpsY - nrrd.origin[1]) / nrrd.spacing[1]); // Rimfill y = -LPS y
    expect(nrrd.data[j * nrrd.nx + i]).toBe(stored);
  });

  it('ignoring the space would turn the slice upside down (the check can fail)', async () => {
    const text = new TextDecoder('latin1').decode(fixture('ct-small-lps.nrrd'));
    const stripped = new Uint8Array(Buffer.from(text.replace('space: left-posterior-superior\n', '# no space\n'), 'latin1'));
    const dicom = await read('ct-small.dcm');
    const plain = await read('plain.nrrd', stripped);
    expect(rmse(plain.data, dicom.data)).toBeGreaterThan(100);
  });
});

function header(lines: string[], n = 4): Uint8Array {
  const head = new TextEncoder().encode(['NRRD0004', 'type: float', 'dimension: 2', `sizes: ${n} ${n}`, 'endian: little', 'encoding: raw', ...lines, '', ''].join('\n'));
  const out = new Uint8Array(head.length + 4 * n * n);
  out.set(head);
  return out;
}

describe('NRRD spaces that cannot be mapped are refused, naming the field', () => {
  it.each([
    [['space: right-anterior-superior-time', 'space directions: (1,0,0) (0,1,0)'], /image space: got "right-anterior-superior-time", a space with a time axis/],
    [['space: 3D-left-handed', 'space directions: (1,0,0) (0,1,0)'], /image space: got "3D-left-handed", a mirrored frame without patient directions/],
    [['space: inferior-posterior-left', 'space directions: (1,0,0) (0,1,0)'], /image space: got "inferior-posterior-left", expected left-posterior-superior, right-anterior-superior/],
    [['space: LPS', 'space directions: (1,0) (0,1)'], /expected vectors of 3 coordinates \(space LPS\)/],
    [['space: LPS', 'space directions: (0,1,0) (1,0,0)'], /expected axis-aligned directions, axis i along x, j along y/],
    [['space: LPS', 'space directions: (1,0,0) (0,1,0)', 'space units: "cm" "cm" "cm"'], /image space units: got "cm" "cm" "cm", expected "mm"/],
  ])('%j', async (lines, message) => {
    const p = readImageFile([{ name: 'x.nrrd', bytes: header(lines) }]);
    await expect(p).rejects.toThrow(InputError);
    await expect(readImageFile([{ name: 'x.nrrd', bytes: header(lines) }])).rejects.toThrow(message);
  });

  it('reads the scanner frame and a plain right-handed frame as Rimfill\'s own', async () => {
    for (const space of ['scanner-xyz', '3D-right-handed', 'left-anterior-superior']) {
      const v = await read('x.nrrd', header([`space: ${space}`, 'space directions: (2,0,0) (0,2,0)', 'space origin: (1,2,3)']));
      expect(v.origin).toEqual([1, 2, 3]);
      expect(v.spacing.slice(0, 2)).toEqual([2, 2]);
    }
  });
});

/** A MetaImage header (MetaIO: "Key = Value" lines, ElementDataFile LOCAL last) over int16 data. */
function metaImage(lines: string[], data: Uint8Array): Uint8Array {
  const head = new TextEncoder().encode(['ObjectType = Image', 'NDims = 2', 'BinaryData = True', 'BinaryDataByteOrderMSB = False', 'DimSize = 128 128',
    'ElementSpacing = 0.661468 0.661468', 'ElementType = MET_SHORT', 'RimfillQuantity = hu', ...lines, 'ElementDataFile = LOCAL', ''].join('\n'));
  const out = new Uint8Array(head.length + data.length);
  out.set(head);
  out.set(data, head.length);
  return out;
}

describe('MetaImage AnatomicalOrientation', () => {
  const bytes = fixture('ct-small-lps.nrrd');
  const stored = bytes.subarray(bytes.length - 128 * 128 * 2);
  // The DICOM's rows as stored: in LPS they run toward L and P; the origin is Image Position.
  const identity = ['TransformMatrix = 1 0 0 1', 'Offset = -158.135803 -179.035797'];
  // The same rows written in a frame whose x and y point right and anterior, expressed in LPS.
  const turned = ['TransformMatrix = -1 0 0 -1', 'Offset = -158.135803 -179.035797'];

  it.each([
    ['RA (the side each axis comes from)', identity, 'RA'],
    ['LP (the side each axis runs toward)', identity, 'LP'],
  ])('%s places the slice as the DICOM', async (_, lines, code) => {
    const dicom = await read('ct-small.dcm');
    const mha = await read('x.mha', metaImage([...lines, `AnatomicalOrientation = ${code}`], stored));
    sameGrid(mha, dicom);
    expect(rmse(mha.data, dicom.data)).toBeLessThan(0.5);
  });

  it('refuses letters that disagree with the TransformMatrix', async () => {
    const p = read('x.mha', metaImage([...turned, 'AnatomicalOrientation = RP'], stored));
    await expect(p).rejects.toThrow(/MetaImage AnatomicalOrientation: got "RP", but TransformMatrix has the axes run toward RA/);
    await expect(read('x.mha', metaImage([...identity, 'AnatomicalOrientation = RX'], stored))).rejects.toThrow(/expected 2 letters, one of R\/L, A\/P, S\/I per axis/);
  });

  it('places turned axes by the TransformMatrix: stored (r, c) at LPS (px - c dx, py - r dy)', async () => {
    const v = await read('x.mha', metaImage([...turned, 'AnatomicalOrientation = LP'], stored));
    const values = new DataView(stored.buffer, stored.byteOffset, stored.byteLength);
    for (const [r, c] of [[0, 0], [20, 90], [127, 5]]) {
      const x = -158.135803 - c * 0.661468, y = -(-179.035797 - r * 0.661468); // Rimfill y = -LPS y
      const i = Math.round((x - v.origin[0]) / v.spacing[0]), j = Math.round((y - v.origin[1]) / v.spacing[1]);
      expect(v.data[j * v.nx + i]).toBe(values.getInt16(2 * (r * 128 + c), true));
    }
  });
});

describe('Rimfill writes the frame it means', () => {
  it('MetaImage export: LPS coordinates, rows from anterior to posterior, letters RA, read back unchanged', async () => {
    const dicom = await read('ct-small.dcm');
    const image = imageAsMu(volumeSlice(dicom, 0), 0.02);
    const w = await writeImageFile(image, 'out.mha', { format: 'mha', quantity: 'hu' });
    const text = new TextDecoder('latin1').decode(w.files[0].bytes.subarray(0, 600));
    expect(text).toMatch(/TransformMatrix = 1 0 0 1\n/);
    expect(text).toMatch(/Offset = -158\.135803 -179\.035797\d*\n/);
    expect(text).toMatch(/AnatomicalOrientation = RA\n/);
    const back = await read('out.mha', w.files[0].bytes);
    sameGrid(back, dicom);
    expect(rmse(back.data, dicom.data)).toBeLessThan(0.01);
  });
});
