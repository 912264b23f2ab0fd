// Named lies, each rejected with one clear InputError that names the field, before any
// allocation the ceiling forbids.
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { gzip } from '../../web/core/formats/gzip';
import type { NamedBytes } from '../../web/core/formats/named-file';
import { readImageFile } from '../../web/core/formats/read-image';
import { readProjectionData, readScanFile } from '../../web/core/formats/read-scan';
import { writeTiffStack } from '../../web/core/formats/tiff';
import { fixtureBytes, fixtureFile } from '../helpers/fixtures';

const enc = (s: string) => new TextEncoder().encode(s);
function cat(...parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}
const nrrd = (header: string, data: Uint8Array = new Uint8Array(16)) => [{ name: 'x.nrrd', bytes: cat(enc(`NRRD0004\n${header}\n\n`), data) }];

async function rejects(files: NamedBytes[], pattern: RegExp, read: 'image' | 'projections' = 'image', maxBytes?: number): Promise<void> {
  const run = read === 'image' ? readImageFile(files, { maxBytes }) : readProjectionData(files, { maxBytes });
  await expect(run).rejects.toThrow(InputError);
  await expect(run).rejects.toThrow(pattern);
}

describe('NRRD lies', () => {
  it('sizes larger than the data present', () => rejects(nrrd('type: float\ndimension: 2\nsizes: 4 4\nencoding: raw'), /promises 64 bytes.*holds 16/));
  it('data past the memory ceiling, refused before allocating', () => rejects(nrrd('type: float\ndimension: 2\nsizes: 100 100\nencoding: raw', new Uint8Array(40000)), /40000 bytes needed, more than the memory limit of 10000 bytes/, 'image', 10000));
  it('gzip sizes past the memory ceiling, refused before inflating', () => rejects(nrrd('type: float\ndimension: 3\nsizes: 100000 100000 100000\nencoding: gzip'), /memory limit of 1.0 GiB/));
  it('a negative size', () => rejects(nrrd('type: float\ndimension: 2\nsizes: 4 -4\nencoding: raw'), /NRRD sizes/));
  it('an unknown type', () => rejects(nrrd('type: complex\ndimension: 2\nsizes: 2 2\nencoding: raw'), /NRRD type: got "complex"/));
  it('an unknown encoding', () => rejects(nrrd('type: float\ndimension: 2\nsizes: 2 2\nencoding: bzip2'), /NRRD encoding: got "bzip2"/));
  it('truncated gzip data', async () => {
    const z = await gzip(new Uint8Array(4096).fill(3));
    await rejects(nrrd('type: uchar\ndimension: 2\nsizes: 64 64\nencoding: gzip', z.subarray(0, z.length - 9)), /damaged or truncated|holds/);
  });
  it('gzip data that expand beyond what the header announces', async () => {
    const z = await gzip(new Uint8Array(1 << 20));
    await rejects(nrrd('type: uchar\ndimension: 2\nsizes: 4 4\nencoding: gzip', z), /expand beyond 16 bytes/);
  });
  it('a detached data file that was not given', () => rejects(nrrd('type: float\ndimension: 2\nsizes: 2 2\nencoding: raw\ndata file: elsewhere.raw'), /"elsewhere.raw" was not given/));
});

describe('MetaImage and raw lies', () => {
  it('DimSize larger than the data file', () => rejects([
    { name: 'a.mhd', bytes: enc('NDims = 2\nDimSize = 10 10\nElementType = MET_FLOAT\nElementDataFile = a.raw\n') },
    { name: 'a.raw', bytes: new Uint8Array(100) },
  ], /promises 400 bytes.*holds 100/));
  it('an unknown element type', () => rejects([{ name: 'a.mha', bytes: enc('NDims = 2\nDimSize = 1 1\nElementType = MET_FLOAT_MATRIX\nElementDataFile = LOCAL\n') }], /ElementType: got "MET_FLOAT_MATRIX"/));
  it('a sidecar whose sizes do not match the raw file', () => rejects([
    { name: 's.json', bytes: enc('{"dtype":"uint16","sizes":[100,100]}') }, { name: 's.raw', bytes: new Uint8Array(50) },
  ], /promises 20000 bytes.*holds 50/));
  it('a sidecar with an unknown dtype', () => rejects([
    { name: 's.json', bytes: enc('{"dtype":"float16","sizes":[2,2]}') }, { name: 's.raw', bytes: new Uint8Array(8) },
  ], /dtype: got "float16"/));
});

describe('TIFF lies', () => {
  const tiff = () => writeTiffStack({ width: 2, height: 2, frames: 2, data: new Float32Array(8) });
  it('a directory chain that loops back', async () => {
    const b = tiff();
    const v = new DataView(b.buffer);
    const n = v.getUint16(8, true);
    const second = v.getUint32(8 + 2 + n * 12, true);
    v.setUint32(second + 2 + n * 12, 8, true); // the second directory points back to the first
    await rejects([{ name: 'loop.tif', bytes: b }], /loops back to byte 8/);
  });
  it('JPEG compression (not accepted: frames are read exactly)', async () => {
    const b = tiff();
    const v = new DataView(b.buffer);
    const n = v.getUint16(8, true);
    for (let i = 0; i < n; i++) if (v.getUint16(10 + i * 12, true) === 259) v.setUint16(10 + i * 12 + 8, 7, true);
    await rejects([{ name: 'jpeg.tif', bytes: b }], /Compression: got 7, expected 1 \(none\), 5 \(LZW\), 8 \(deflate\) or 32773 \(PackBits\)/);
  });
  it('LZW data cut short', async () => {
    const b = fixtureBytes('tiff/stack-lzw.tif');
    const v = new DataView(b.buffer);
    const ifd = v.getUint32(4, true);
    const n = v.getUint16(ifd, true);
    // Halve the byte count of the first strip: its LZW stream ends early.
    for (let i = 0; i < n; i++) if (v.getUint16(ifd + 2 + i * 12, true) === 279) {
      const at = v.getUint32(ifd + 2 + i * 12 + 8, true);
      v.setUint32(at, v.getUint32(at, true) >> 1, true);
    }
    await rejects([{ name: 'short.tif', bytes: b }], /short\.tif: TIFF strip 0 of the page at byte \d+: LZW data decode to \d+ bytes, 384 expected/);
  });
  it('a strip offset past the end of the file', async () => {
    const b = tiff();
    const v = new DataView(b.buffer);
    const n = v.getUint16(8, true);
    for (let i = 0; i < n; i++) if (v.getUint16(10 + i * 12, true) === 273) v.setUint32(10 + i * 12 + 8, 1 << 30, true);
    await rejects([{ name: 'far.tif', bytes: b }], /runs past the end of the file/);
  });
});

describe('DICOM files we do not read', () => {
  // pydicom's test files, committed as fixtures (test/fixtures/MANIFEST.json).
  const file = (name: string) => [fixtureFile(`dicom/${name}`)];
  it('a compressed transfer syntax (pydicom JPEG2000.dcm)', () => rejects(file('JPEG2000.dcm'), /transfer syntax 1\.2\.840\.10008\.1\.2\.4\.9\d is compressed/));
  it('an MR image (pydicom MR_small.dcm)', () => rejects(file('MR_small.dcm'), /modality "MR", expected CT/));
  it('a truncated file (pydicom MR_truncated.dcm)', () => rejects(file('MR_truncated.dcm'), /DICOM MR_truncated.dcm/));
});

describe('scan lies', () => {
  it('a geometry that does not match the data', async () => {
    const g = { kind: 'parallel', detector: { channels: 3, pitch: 1 }, anglesDeg: { start: 0, step: 1, count: 5 } };
    const files = [{ name: 's.json', bytes: enc(JSON.stringify({ ...g, dtype: 'float32', sizes: [4, 5] })) }, { name: 's.raw', bytes: new Uint8Array(80) }];
    await expect(readScanFile(files)).rejects.toThrow(/geometry.detector.channels: got 3, expected 4/);
  });
  it('intensity data without a flat frame or i0', async () => {
    const g = { kind: 'parallel', detector: { channels: 4, pitch: 1 }, anglesDeg: { start: 0, step: 1, count: 5 } };
    const files = [{ name: 's.json', bytes: enc(JSON.stringify({ ...g, dtype: 'float32', sizes: [4, 5], quantity: 'intensity' })) }, { name: 's.raw', bytes: new Uint8Array(80) }];
    await expect(readScanFile(files)).rejects.toThrow(/need a flat frame or the unattenuated level \(i0\); give --flat F or --i0 N/);
  });
  it('NaN line integrals are reported, not hidden', async () => {
    const g = { kind: 'parallel', detector: { channels: 2, pitch: 1 }, anglesDeg: { start: 0, step: 1, count: 1 } };
    const files = [{ name: 's.json', bytes: enc(JSON.stringify({ ...g, dtype: 'float32', sizes: [2, 1] })) }, { name: 's.raw', bytes: new Uint8Array(new Float32Array([1, Number.NaN]).buffer) }];
    await expect(readScanFile(files)).rejects.toThrow(/1 of 2 line integrals are not finite/);
  });
  it('DICOM given as projections', async () => {
    const b = new Uint8Array(200);
    b.set(enc('DICM'), 128);
    await rejects([{ name: 'x.dcm', bytes: b }], /DICOM files hold images, not projections/, 'projections');
  });
});
