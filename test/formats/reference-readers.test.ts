// Readers against files written by independent general-purpose writers (pydicom for DICOM,
// tifffile for TIFF, numpy bytes with Python's gzip and zlib for NRRD and MetaImage) and against
// pydicom's shipped CT image (REFERENCES.md [pydicom-ct-small], [dicom-rescale]). The files and
// the values those libraries were given are committed fixtures made by
// scripts/reference/dicom_files.py and writer_files.py (test/fixtures/MANIFEST.json).
import { describe, expect, it } from 'vitest';
import { readImageFile } from '../../web/core/formats/read-image';
import { readProjectionData } from '../../web/core/formats/read-scan';
import { fixtureF32, fixtureFile, fixtureFolder } from '../helpers/fixtures';

describe('DICOM', () => {
  it('CT_small.dcm (pydicom test file): HU by the rescale rule, spacing and position', async () => {
    // REFERENCES.md [pydicom-ct-small]: 128 x 128 int16, spacing 0.661468 mm, slope 1,
    // intercept -1024, stored min 128, max 2191, sum 14,826,310; HU = stored * slope +
    // intercept (DICOM PS3.3 C.11.1.1.2).
    const { volume } = await readImageFile([fixtureFile('dicom/CT_small.dcm')]);
    expect([volume.nx, volume.ny, volume.nz]).toEqual([128, 128, 1]);
    expect(volume.quantity).toBe('hu');
    expect(volume.spacing[0]).toBeCloseTo(0.661468, 6);
    expect(volume.spacing[1]).toBeCloseTo(0.661468, 6);
    // Rimfill y is anterior (patient y negated): voxel (0, 0) is the last stored row.
    expect(volume.origin[0]).toBe(-158.135803);
    expect(volume.origin[1]).toBeCloseTo(179.035797 - 127 * 0.661468, 9);
    expect(volume.origin[2]).toBe(-75.699997);
    let min = Infinity, max = -Infinity, sum = 0;
    for (const v of volume.data) {
      min = Math.min(min, v);
      max = Math.max(max, v);
      sum += v;
    }
    expect(min).toBe(128 - 1024);
    expect(max).toBe(2191 - 1024);
    expect(sum).toBe(14826310 - 1024 * 128 * 128);
    // Pixel by pixel against pydicom's own decoding.
    expect(volume.data).toEqual(fixtureF32('dicom/ct-small-hu.f32'));
  });

  it('a shuffled series written by pydicom: sorted by position, flipped axes turned, slope/intercept applied', async () => {
    const { volume } = await readImageFile(fixtureFolder('dicom/shuffled-series'));
    expect([volume.nx, volume.ny, volume.nz]).toEqual([6, 5, 4]);
    expect(volume.spacing).toEqual([0.5, 0.7, 2.5]);
    // Rows run along -x: the first stored pixel (x = 20) becomes the last of the flipped row;
    // columns run posterior from patient y = -3, so Rimfill y runs from 3 - 4 x 0.7 up to 3.
    expect(volume.origin[0]).toBe(20 - 5 * 0.5);
    expect(volume.origin[1]).toBeCloseTo(3 - 4 * 0.7, 12);
    expect(volume.origin[2]).toBe(7.5);
    expect(volume.data).toEqual(fixtureF32('dicom/shuffled-series.f32'));
  });
});

describe('TIFF written by tifffile', () => {
  const variants: Array<[string, string]> = [
    ['uint16 multi-page, little-endian', 'uint16-le'],
    ['int16 multi-page, big-endian', 'int16-be'],
    ['uint8 multi-page', 'uint8'],
    ['float32 multi-page, big-endian', 'float32-be'],
    ['float32 in strips of 2 rows', 'float32-strips'],
    ['uint16, deflate', 'uint16-deflate'],
    ['uint16, deflate with horizontal differencing', 'uint16-deflate-predictor'],
    ['uint16, tiles of 16 x 16', 'uint16-tiles'],
  ];
  for (const [label, name] of variants) {
    it(label, async () => {
      const p = await readProjectionData([fixtureFile(`writers/tiff/${name}.tif`)]);
      expect([p.channels, p.rows, p.views]).toEqual([21, 19, 3]);
      expect(p.data).toEqual(fixtureF32(`writers/tiff/${name}.f32`));
    });
  }
  it('one file per frame', async () => {
    const p = await readProjectionData(fixtureFolder('writers/tiff/frames'));
    expect([p.channels, p.rows, p.views]).toEqual([21, 19, 3]);
    expect(p.data).toEqual(fixtureF32('writers/tiff/frames.f32'));
  });
});

describe('NRRD and MetaImage written by independent code (numpy bytes, Python gzip/zlib)', () => {
  it('NRRD big-endian int16, gzip, 3D', async () => {
    const { volume } = await readImageFile([fixtureFile('writers/nrrd/v.nrrd')]);
    expect([volume.nx, volume.ny, volume.nz]).toEqual([4, 3, 2]);
    expect(volume.spacing).toEqual([0.5, 0.5, 2]);
    expect(volume.origin).toEqual([-1, -2, 3]);
    expect(volume.data).toEqual(fixtureF32('writers/nrrd/v.f32'));
  });

  it('detached NRRD header with a float64 data file and byte skip', async () => {
    const p = await readProjectionData([fixtureFile('writers/nrrd/d.nhdr'), fixtureFile('writers/nrrd/d.raw')]);
    expect([p.channels, p.rows, p.views]).toEqual([6, 1, 5]);
    expect(p.data).toEqual(fixtureF32('writers/nrrd/d.f32'));
  });

  it('MetaImage .mhd + .raw uint16 (MSB order) and .mha with zlib data', async () => {
    const mhd = await readImageFile([fixtureFile('writers/metaimage/m.mhd'), fixtureFile('writers/metaimage/m.raw')]);
    expect(mhd.volume.spacing.slice(0, 2)).toEqual([0.25, 0.5]);
    expect(mhd.volume.origin.slice(0, 2)).toEqual([1, 2]);
    expect(mhd.volume.data).toEqual(fixtureF32('writers/metaimage/m.f32'));
    const mha = await readImageFile([fixtureFile('writers/metaimage/z.mha')]);
    expect(mha.volume.data).toEqual(fixtureF32('writers/metaimage/m.f32'));
  });
});
