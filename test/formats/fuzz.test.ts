// Hostile input: seeded mutations of valid files of every format (byte flips, truncation,
// header edits with absurd numbers, inserted bytes). Each case must be read into a well-formed
// result or rejected with InputError: never another exception, never a hang, and never more
// memory than the ceiling given.
import { beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { writeMetaImage } from '../../web/core/formats/metaimage';
import type { NamedBytes } from '../../web/core/formats/named-file';
import { readImageFile } from '../../web/core/formats/read-image';
import { readScanFile } from '../../web/core/formats/read-scan';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { writeTiffStack } from '../../web/core/formats/tiff';
import { writeImageFile } from '../../web/core/formats/write-image';
import { validateGeometry } from '../../web/core/geometry/validate';
import { squareGrid } from '../../web/core/image';
import { seededRandom } from '../../web/core/simulate/noise';
import { fixtureFile } from '../helpers/fixtures';

const CEILING = { maxBytes: 8 << 20 };
const CASES_PER_SEED = 300;

type Reader = (files: NamedBytes[]) => Promise<{ length: number; expected: number }>;

const asImage: Reader = async (files) => {
  const { volume } = await readImageFile(files, CEILING);
  return { length: volume.data.length, expected: volume.nx * volume.ny * volume.nz };
};
const asScan: Reader = async (files) => {
  const { scan } = await readScanFile(files, CEILING);
  const d = scan.geometry.detector;
  return { length: scan.data.length, expected: d.channels * d.rows * (scan.data.length / (d.channels * d.rows) | 0) };
};

const HUGE = ['4294967295', '99999999999', '-1', '0', '1e308', 'NaN', '65536', '2147483648'];

/** One seeded mutation of a file. */
function mutate(src: Uint8Array, rand: () => number): Uint8Array {
  const kind = Math.floor(rand() * 5);
  const b = src.slice();
  const pos = Math.floor(rand() * b.length);
  if (kind === 0) {
    for (let k = 0, n = 1 + Math.floor(rand() * 8); k < n; k++) b[Math.floor(rand() * b.length)] ^= 1 << Math.floor(rand() * 8);
    return b;
  }
  if (kind === 1) return b.subarray(0, pos);
  if (kind === 2) {
    // Header edit: replace a number in the first 600 bytes by an absurd one.
    const head = new TextDecoder('latin1').decode(b.subarray(0, 600));
    const numbers = [...head.matchAll(/\d+(\.\d+)?/g)];
    if (numbers.length === 0) return b;
    const m = numbers[Math.floor(rand() * numbers.length)];
    const text = HUGE[Math.floor(rand() * HUGE.length)];
    const out = new Uint8Array(b.length - m[0].length + text.length);
    out.set(b.subarray(0, m.index!));
    out.set(new TextEncoder().encode(text), m.index!);
    out.set(b.subarray(m.index! + m[0].length), m.index! + text.length);
    return out;
  }
  if (kind === 3) {
    // Binary size edit: overwrite 4 bytes with a large or negative integer.
    const v = new DataView(b.buffer, b.byteOffset, b.byteLength);
    if (b.length >= 4) v.setUint32(Math.min(pos, b.length - 4), [0xffffffff, 0x7fffffff, 0x10000, 0][Math.floor(rand() * 4)], rand() < 0.5);
    return b;
  }
  const ins = Uint8Array.from({ length: 1 + Math.floor(rand() * 16) }, () => Math.floor(rand() * 256));
  const out = new Uint8Array(b.length + ins.length);
  out.set(b.subarray(0, pos));
  out.set(ins, pos);
  out.set(b.subarray(pos), pos + ins.length);
  return out;
}

const seeds: Array<{ label: string; files: NamedBytes[]; read: Reader }> = [];

beforeAll(async () => {
  const geometry = validateGeometry({ kind: 'parallel', detector: { channels: 8, pitch: 1 }, anglesDeg: { start: 0, step: 45, count: 4 } });
  const data = Float32Array.from({ length: 32 }, (_, i) => i * 0.1);
  const image = { grid: squareGrid(6, 0.5), data: Float32Array.from({ length: 36 }, (_, i) => 0.02 + i * 1e-4), quantity: 'mu' as const, muWater: 0.02 };
  seeds.push({ label: 'NRRD scan, raw', files: [{ name: 's.nrrd', bytes: await writeScanNrrd({ geometry, data }) }], read: asScan });
  seeds.push({ label: 'NRRD scan, gzip', files: [{ name: 's.nrrd', bytes: await writeScanNrrd({ geometry, data }, true) }], read: asScan });
  seeds.push({ label: 'NRRD image, int16', files: (await writeImageFile(image, 'i', { format: 'nrrd', quantity: 'hu', sampleType: 'int16' })).files, read: asImage });
  seeds.push({ label: 'MetaImage .mha, zlib', files: (await writeImageFile(image, 'i', { format: 'mha', compress: true })).files, read: asImage });
  const mhd = await writeMetaImage(data, { sizes: [8, 1, 4], spacing: [1, 1, 1], offset: [0, 0, 0], keys: { RimfillGeometry: JSON.stringify(geometry) }, detachedName: 's' });
  seeds.push({ label: 'MetaImage .mhd header', files: mhd, read: asScan });
  seeds.push({ label: 'MetaImage .raw data', files: [mhd[1], mhd[0]], read: asScan });
  const sidecar = new TextEncoder().encode(JSON.stringify({ ...geometry, dtype: 'float32', sizes: [8, 4] }));
  seeds.push({ label: 'raw + JSON sidecar', files: [{ name: 's.json', bytes: sidecar }, { name: 's.raw', bytes: new Uint8Array(data.buffer) }], read: asScan });
  seeds.push({ label: 'TIFF float32 stack (ours)', files: [{ name: 't.tif', bytes: writeTiffStack({ width: 6, height: 3, frames: 4, data: new Float32Array(72).fill(7) }) }], read: asImage });
  // Written by tifffile and pydicom's CT_small.dcm: committed fixtures (test/fixtures/MANIFEST.json).
  for (const name of ['fuzz-zlib.tif', 'fuzz-big-endian.tif', 'fuzz-tiles.tif']) seeds.push({ label: `TIFF by tifffile (${name})`, files: [fixtureFile(`writers/tiff/${name}`)], read: asImage });
  for (const name of ['stack-lzw-predictor-be.tif', 'stack-packbits.tif', 'stack-bigtiff-tiled-lzw-predictor.tif']) seeds.push({ label: `TIFF fixture ${name}`, files: [fixtureFile(`tiff/${name}`)], read: asImage });
  const ct = fixtureFile('dicom/CT_small.dcm').bytes;
  seeds.push({ label: 'DICOM CT_small.dcm', files: [{ name: 'ct.dcm', bytes: ct }], read: asImage });
});

describe('fuzzed files', () => {
  it('every seed file reads as it is', async () => {
    expect(seeds.length).toBe(15); // 8 written by us, 3 by tifffile, 3 TIFF fixtures (LZW, PackBits, BigTIFF), pydicom's CT_small
    for (const s of seeds) {
      const r = await s.read(s.files);
      expect(r.length, s.label).toBe(r.expected);
    }
  });

  it(`${CASES_PER_SEED} mutations of each seed: read well-formed or rejected with InputError, each within a second`, async () => {
    const rand = seededRandom(20240611);
    const outcomes: Record<string, { read: number; rejected: number }> = {};
    for (const s of seeds) {
      const o = { read: 0, rejected: 0 };
      outcomes[s.label] = o;
      for (let k = 0; k < CASES_PER_SEED; k++) {
        const files = s.files.map((f, i) => (i === 0 || rand() < 0.3 ? { name: f.name, bytes: mutate(f.bytes, rand) } : f));
        const t0 = performance.now();
        try {
          const r = await s.read(files);
          expect(r.length, `${s.label} case ${k}`).toBe(r.expected);
          o.read++;
        } catch (err) {
          if (!(err instanceof InputError)) throw new Error(`${s.label} case ${k}: ${err instanceof Error ? err.stack : String(err)}`);
          expect(err.message.length).toBeGreaterThan(10);
          o.rejected++;
        }
        expect(performance.now() - t0, `${s.label} case ${k} took too long`).toBeLessThan(1000);
      }
    }
    // Both outcomes occur for every format: the mutations reach past the first check.
    for (const [label, o] of Object.entries(outcomes)) {
      expect(o.read + o.rejected, label).toBe(CASES_PER_SEED);
      expect(o.rejected, label).toBeGreaterThan(0);
      expect(o.read, label).toBeGreaterThan(0);
    }
  });
});
