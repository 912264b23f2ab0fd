// Streamed reading (scan-stream.ts) against whole-file reading (readScanFile): the same values,
// geometry and warnings, a chunk of views at a time, for raw NRRD (attached, detached, another
// byte order) and TIFF frame folders with dark and flat frames. The whole-file readers are
// themselves checked against independent writers (reference-readers.test.ts); here the stream
// must reproduce them exactly (common practice: one conversion, two access patterns).
import { describe, expect, it } from 'vitest';
import { bytesSource } from '../../web/core/formats/byte-source';
import { readScanFile } from '../../web/core/formats/read-scan';
import { openScanStream } from '../../web/core/formats/scan-stream';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { writeTiffStack } from '../../web/core/formats/tiff';
import type { NamedBytes } from '../../web/core/formats/named-file';
import { validateGeometry } from '../../web/core/geometry/validate';
import { readWholeScan } from '../../web/core/projection-source';
import { InputError } from '../../web/core/errors';

const geometry = validateGeometry({
  kind: 'cone', detector: { shape: 'flat', channels: 6, rows: 4, pitch: [1, 1], offset: [0, 0] },
  sourceIsocenter: 300, sourceDetector: 500, anglesDeg: { start: 0, step: 30, count: 5 },
});
const frame = 24;
const values = Float32Array.from({ length: 5 * frame }, (_, i) => 0.5 + Math.sin(i * 0.7) * 0.4);

/** Reads the stream in chunks of `chunk` views. */
async function streamed(files: NamedBytes[], chunk: number, options = {}) {
  const s = await openScanStream(files.map(bytesSource), options);
  expect(s).toBeDefined();
  const out = new Float32Array(5 * frame);
  for (let v = 0; v < 5; v += chunk) out.set(await s!.source.read(v, Math.min(5, v + chunk)), v * frame);
  return { s: s!, data: out };
}

describe('streamed scans', () => {
  it('raw NRRD: the same values and geometry in any chunking', async () => {
    const bytes = await writeScanNrrd({ geometry, data: values, muWater: 0.02 });
    const whole = await readScanFile([{ name: 'scan.nrrd', bytes }]);
    for (const chunk of [1, 2, 5]) {
      const { s, data } = await streamed([{ name: 'scan.nrrd', bytes }], chunk);
      expect(data).toEqual(whole.scan.data);
      expect(s.source.geometry).toEqual(geometry);
      expect(s.source.muWater).toBe(0.02);
    }
  });

  it('detached big-endian uint16 NRRD with byte skip, as intensities with i0', async () => {
    const counts = Uint16Array.from({ length: 5 * frame }, (_, i) => 1000 + ((i * 37) % 900));
    const raw = new Uint8Array(16 + counts.length * 2);
    const view = new DataView(raw.buffer);
    for (let i = 0; i < counts.length; i++) view.setUint16(16 + 2 * i, counts[i], false);
    const header = new TextEncoder().encode(`NRRD0004\ntype: uint16\ndimension: 3\nsizes: 6 4 5\nendian: big\nencoding: raw\nbyte skip: 16\ndata file: counts.raw\nrimfill.geometry:=${JSON.stringify(geometry)}\nrimfill.quantity:=intensity\n\n`);
    const files = [{ name: 'scan.nhdr', bytes: header }, { name: 'counts.raw', bytes: raw }];
    const whole = await readScanFile(files, { i0: 2000 });
    const { data } = await streamed(files, 2, { i0: 2000 });
    expect(data).toEqual(whole.scan.data);
    expect(data[0]).toBeCloseTo(-Math.log(1000 / 2000), 6); // Beer-Lambert, p = -ln(I / I0)
  });

  it('TIFF frame folder with dark and flat: the values and warnings of a whole read', async () => {
    const counts = values.map((v) => Math.round(4000 * Math.exp(-v)));
    counts[7] = 0; // below the dark level: clamped and reported
    const tif = (f: number) => writeTiffStack({ width: 6, height: 4, frames: 1, data: counts.subarray(f * frame, (f + 1) * frame) }, 'uint16');
    const files = Array.from({ length: 5 }, (_, f) => ({ name: `p${f + 1}.tif`, bytes: tif(f) })).reverse(); // natural order restores p1..p5
    const flat = [{ name: 'flat.tif', bytes: writeTiffStack({ width: 6, height: 4, frames: 1, data: new Float32Array(frame).fill(4010) }, 'uint16') }];
    const options = { geometry, flat, dark: 10 };
    const whole = await readScanFile(files, options);
    const { s, data } = await streamed(files, 2, options);
    expect(data).toEqual(whole.scan.data);
    expect(s.warnings()).toEqual(whole.warnings);
    expect(s.warnings().join(' ')).toMatch(/1 of 120 readings .* at or below the dark level/);
  });

  it('refuses a frame that does not match the first, naming the file, when it is read', async () => {
    const ok = writeTiffStack({ width: 6, height: 4, frames: 1, data: new Float32Array(frame).fill(100) }, 'uint16');
    const odd = writeTiffStack({ width: 5, height: 4, frames: 1, data: new Float32Array(20).fill(100) }, 'uint16');
    const files = [1, 2, 3, 4].map((i) => ({ name: `f${i}.tif`, bytes: ok })).concat([{ name: 'f5.tif', bytes: odd }]);
    const s = await openScanStream(files.map(bytesSource), { geometry, i0: 200 });
    await s!.source.read(0, 4);
    await expect(s!.source.read(4, 5)).rejects.toThrow(InputError);
    await expect(s!.source.read(4, 5)).rejects.toThrow(/f5\.tif: 1 frame\(s\) of 5 x 4 among files of 1 frame\(s\) of 6 x 4/);
  });

  it('leaves gzip NRRD to the whole-file reader, and the whole read of a source matches', async () => {
    const gz = await writeScanNrrd({ geometry, data: values }, true);
    expect(await openScanStream([bytesSource({ name: 'scan.nrrd', bytes: gz })])).toBeUndefined();
    const bytes = await writeScanNrrd({ geometry, data: values });
    const s = await openScanStream([bytesSource({ name: 'scan.nrrd', bytes })]);
    expect((await readWholeScan(s!.source)).data).toEqual(values);
  });
});
