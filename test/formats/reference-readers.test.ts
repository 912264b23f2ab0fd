// Readers against files written by independent general-purpose writers (Debian's Python 3:
// numpy for raw bytes and headers, tifffile for TIFF, pydicom for DICOM) and against pydicom's
// shipped CT image (references.md section 9).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { readImageFile } from '../../web/core/formats/read-image';
import { readProjectionData } from '../../web/core/formats/read-scan';
import type { NamedBytes } from '../../web/core/formats/named-file';
import { runPython } from '../helpers/python';

const CT_SMALL = '/usr/lib/python3/dist-packages/pydicom/data/test_files/CT_small.dcm';

function named(files: Record<string, Uint8Array>, pick?: (n: string) => boolean): NamedBytes[] {
  return Object.entries(files).filter(([n]) => !pick || pick(n)).map(([name, bytes]) => ({ name, bytes }));
}

/** The values numpy wrote to ref.f32 (little-endian float32), our expectation. */
function reference(files: Record<string, Uint8Array>): Float32Array {
  const b = files['ref.f32'];
  return new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}

describe('DICOM', () => {
  it('CT_small.dcm (pydicom test file): HU by the rescale rule, spacing and position', async () => {
    // references.md 9: 128 x 128 int16, spacing 0.661468 mm, slope 1, intercept -1024,
    // stored min 128, max 2191, sum 14,826,310; HU = stored * slope + intercept
    // (DICOM PS3.3 C.11.1.1.2).
    const bytes = new Uint8Array(readFileSync(CT_SMALL));
    const { volume } = await readImageFile([{ name: 'CT_small.dcm', bytes }]);
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
    const py = runPython(
      `import pydicom, numpy as np\nd = pydicom.dcmread(${JSON.stringify(CT_SMALL)})\nhu = d.pixel_array.astype(np.float32) * float(d.RescaleSlope) + float(d.RescaleIntercept)\nhu[::-1, :].astype('<f4').tofile('ref.f32')`,
      ['pydicom', 'numpy'],
    );
    expect(volume.data).toEqual(reference(py.files));
  });

  it('a shuffled series written by pydicom: sorted by position, flipped axes turned, slope/intercept applied', async () => {
    const py = runPython(`
import numpy as np, pydicom
from pydicom.dataset import FileDataset, FileMetaDataset
from pydicom.uid import ExplicitVRBigEndian, ExplicitVRLittleEndian, generate_uid
rng = np.random.default_rng(3)
series = generate_uid()
vol = []
for k, z in enumerate([12.5, 10.0, 15.0, 7.5]):
    stored = rng.integers(0, 3000, size=(5, 6)).astype(np.uint16)
    meta = FileMetaDataset()
    meta.MediaStorageSOPClassUID = '1.2.840.10008.5.1.4.1.1.2'
    meta.MediaStorageSOPInstanceUID = generate_uid()
    meta.TransferSyntaxUID = ExplicitVRBigEndian if k == 1 else ExplicitVRLittleEndian
    ds = FileDataset(f's{k}.dcm', {}, file_meta=meta, preamble=b'\\0' * 128)
    ds.is_little_endian = k != 1
    ds.is_implicit_VR = False
    ds.Modality = 'CT'
    ds.SOPClassUID = meta.MediaStorageSOPClassUID
    ds.SOPInstanceUID = meta.MediaStorageSOPInstanceUID
    ds.SeriesInstanceUID = series
    ds.Rows, ds.Columns = 5, 6
    ds.PixelSpacing = [0.7, 0.5]
    ds.ImageOrientationPatient = [-1, 0, 0, 0, 1, 0]
    ds.ImagePositionPatient = [20.0, -3.0, z]
    ds.SamplesPerPixel = 1
    ds.PhotometricInterpretation = 'MONOCHROME2'
    ds.BitsAllocated = 16
    ds.BitsStored = 12
    ds.HighBit = 11
    ds.PixelRepresentation = 0
    ds.RescaleSlope = 2
    ds.RescaleIntercept = -1000
    ds.InstanceNumber = k + 1
    ds.PixelData = stored.tobytes() if k != 1 else stored.byteswap().tobytes()
    ds.save_as(f's{k}.dcm', write_like_original=False)
    hu = (stored.astype(np.float32) % 4096) * 2 - 1000
    vol.append((z, hu[::-1, ::-1]))  # rows along -x: columns reversed; Rimfill y = -patient y: rows reversed
vol.sort(key=lambda t: t[0])
np.stack([h for _, h in vol]).astype('<f4').tofile('ref.f32')
`, ['pydicom', 'numpy']);
    const { volume } = await readImageFile(named(py.files, (n) => n.endsWith('.dcm')));
    expect([volume.nx, volume.ny, volume.nz]).toEqual([6, 5, 4]);
    expect(volume.spacing).toEqual([0.5, 0.7, 2.5]);
    // Rows run along -x: the first stored pixel (x = 20) becomes the last of the flipped row;
    // columns run posterior from patient y = -3, so Rimfill y runs from 3 - 4 x 0.7 up to 3.
    expect(volume.origin[0]).toBe(20 - 5 * 0.5);
    expect(volume.origin[1]).toBeCloseTo(3 - 4 * 0.7, 12);
    expect(volume.origin[2]).toBe(7.5);
    expect(volume.data).toEqual(reference(py.files));
  });
});

describe('TIFF written by tifffile', () => {
  const variants: Array<[string, string, string]> = [
    ['uint16 multi-page, little-endian', "np.uint16", "tifffile.imwrite('s.tif', a, photometric='minisblack')"],
    ['int16 multi-page, big-endian', "np.int16", "tifffile.imwrite('s.tif', a, photometric='minisblack', byteorder='>')"],
    ['uint8 multi-page', "np.uint8", "tifffile.imwrite('s.tif', a, photometric='minisblack')"],
    ['float32 multi-page, big-endian', "np.float32", "tifffile.imwrite('s.tif', a, photometric='minisblack', byteorder='>')"],
    ['float32 in strips of 2 rows', "np.float32", "tifffile.imwrite('s.tif', a, photometric='minisblack', rowsperstrip=2)"],
    ['uint16, deflate', "np.uint16", "tifffile.imwrite('s.tif', a, photometric='minisblack', compression='zlib')"],
    ['uint16, deflate with horizontal differencing', "np.uint16", "tifffile.imwrite('s.tif', a, photometric='minisblack', compression='zlib', predictor=True)"],
    ['uint16, tiles of 16 x 16', "np.uint16", "tifffile.imwrite('s.tif', a, photometric='minisblack', tile=(16, 16))"],
    ['one file per frame', "np.uint16", "[tifffile.imwrite(f'f{k:02d}.tif', a[k], photometric='minisblack') for k in range(a.shape[0])]"],
  ];
  for (const [label, dtype, write] of variants) {
    it(label, async () => {
      const py = runPython(`
import numpy as np, tifffile
rng = np.random.default_rng(5)
a = (rng.random((3, 19, 21)) * 250).astype(${dtype})
${write}
a.astype('<f4').tofile('ref.f32')
`, ['tifffile', 'numpy']);
      const p = await readProjectionData(named(py.files, (n) => n.endsWith('.tif')));
      expect([p.channels, p.rows, p.views]).toEqual([21, 19, 3]);
      expect(p.data).toEqual(reference(py.files));
    });
  }
});

describe('NRRD and MetaImage written by independent code (numpy bytes, Python gzip/zlib)', () => {
  it('NRRD big-endian int16, gzip, 3D', async () => {
    const py = runPython(`
import numpy as np, gzip
a = (np.arange(4 * 3 * 2).reshape(2, 3, 4) * 37 - 400).astype('>i2')
hdr = 'NRRD0005\\ntype: short\\ndimension: 3\\nsizes: 4 3 2\\nendian: big\\nencoding: gzip\\nspace directions: (0.5,0,0) (0,0.5,0) (0,0,2)\\nspace origin: (-1,-2,3)\\n\\n'
open('v.nrrd', 'wb').write(hdr.encode() + gzip.compress(a.tobytes()))
a.astype('<f4').tofile('ref.f32')
`, ['numpy']);
    const { volume } = await readImageFile(named(py.files, (n) => n === 'v.nrrd'));
    expect([volume.nx, volume.ny, volume.nz]).toEqual([4, 3, 2]);
    expect(volume.spacing).toEqual([0.5, 0.5, 2]);
    expect(volume.origin).toEqual([-1, -2, 3]);
    expect(volume.data).toEqual(reference(py.files));
  });

  it('detached NRRD header with a float64 data file and byte skip', async () => {
    const py = runPython(`
import numpy as np
a = np.linspace(-1, 1, 30).reshape(5, 6).astype('<f8')
open('d.raw', 'wb').write(b'JUNKJUNK' + a.tobytes())
open('d.nhdr', 'w').write('NRRD0004\\ntype: double\\ndimension: 2\\nsizes: 6 5\\nencoding: raw\\nendian: little\\nbyte skip: 8\\ndata file: d.raw\\n')
a.astype('<f4').tofile('ref.f32')
`, ['numpy']);
    const p = await readProjectionData(named(py.files, (n) => n !== 'ref.f32'));
    expect([p.channels, p.rows, p.views]).toEqual([6, 1, 5]);
    expect(p.data).toEqual(reference(py.files));
  });

  it('MetaImage .mhd + .raw uint16 (MSB order) and .mha with zlib data', async () => {
    const py = runPython(`
import numpy as np, zlib
a = (np.arange(7 * 4) * 911 % 65535).reshape(4, 7).astype('>u2')
open('m.raw', 'wb').write(a.tobytes())
open('m.mhd', 'w').write('ObjectType = Image\\nNDims = 2\\nBinaryData = True\\nBinaryDataByteOrderMSB = True\\nElementSpacing = 0.25 0.5\\nOffset = 1 2\\nDimSize = 7 4\\nElementType = MET_USHORT\\nElementDataFile = m.raw\\n')
z = zlib.compress(a.astype('<f4').tobytes())
open('z.mha', 'wb').write(('ObjectType = Image\\nNDims = 2\\nCompressedData = True\\nCompressedDataSize = %d\\nDimSize = 7 4\\nElementType = MET_FLOAT\\nElementDataFile = LOCAL\\n' % len(z)).encode() + z)
a.astype('<f4').tofile('ref.f32')
`, ['numpy']);
    const mhd = await readImageFile(named(py.files, (n) => n.startsWith('m.')));
    expect(mhd.volume.spacing.slice(0, 2)).toEqual([0.25, 0.5]);
    expect(mhd.volume.origin.slice(0, 2)).toEqual([1, 2]);
    expect(mhd.volume.data).toEqual(reference(py.files));
    const mha = await readImageFile(named(py.files, (n) => n === 'z.mha'));
    expect(mha.volume.data).toEqual(reference(py.files));
  });
});
