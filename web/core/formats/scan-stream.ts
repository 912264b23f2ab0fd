// Reading a scan a chunk of views at a time, for inputs whose layout allows it: an NRRD file
// with raw data (attached or in a detached data file) and a folder of TIFF files holding the
// same number of frames each. Every chunk goes through the same conversion as a whole read
// (scan-assembly.ts: intensities to line integrals, bad elements, beam hardening), so the two
// give the same values. Other inputs (gzip NRRD, MetaImage, raw + JSON, one multi-page TIFF)
// return undefined: read them whole with readScanFile.
import { InputError } from '../errors';
import type { ProjectionSource } from '../projection-source';
import { readWhole, type ByteSource } from './byte-source';
import { looksLikeDicom } from './dicom';
import { baseName, naturalOrder } from './named-file';
import { byteSkip, nrrdDataFile, nrrdLayout, parseNrrdHeader } from './nrrd';
import { resolveCorrections, type ScanFileOptions } from './read-scan';
import { decodeSamples, SAMPLE_BYTES, type SampleType } from './sample-types';
import { convertViews, planScan, tallyWarnings, type ConversionTally, type ProjectionHeader, type ScanPlan } from './scan-assembly';
import { projectionHeaderFromNrrd } from './scan-nrrd';
import { readTiffStack } from './tiff';
import { looksLikeTiff } from './tiff-structure';
import { checkAllocation, checkBytesPresent } from './limits';

/** A scan opened for streaming. */
export interface StreamedScan {
  /** Line integrals, views converted as they are read. */
  source: ProjectionSource;
  format: string;
  plan: ScanPlan;
  /** What conversion clamped or filled in the views read so far. */
  warnings(): string[];
  tally: ConversionTally;
}

/** Raw views as stored: `read` gives views [v0, v1) as float32, before conversion. */
interface RawViews {
  header: ProjectionHeader;
  read(v0: number, v1: number): Promise<Float32Array>;
}

const HEAD_BYTES = 1 << 20;

/** Opens `files` as a streamed scan, or returns undefined when their format cannot stream. */
export async function openScanStream(files: readonly ByteSource[], options: ScanFileOptions = {}): Promise<StreamedScan | undefined> {
  if (files.length === 0) throw new InputError('no input files given');
  const heads = await Promise.all(files.map((f) => f.read(0, Math.min(f.size, 4096))));
  const nrrd = heads.map((h) => h.length >= 8 && new TextDecoder().decode(h.subarray(0, 7)) === 'NRRD000');
  let raw: RawViews | undefined;
  if (nrrd.filter(Boolean).length === 1) raw = await nrrdViews(files, files[nrrd.indexOf(true)], options.maxBytes);
  else if (files.length > 1 && heads.every((h) => looksLikeTiff(h) && !looksLikeDicom(h))) raw = await tiffFrames(files, options.maxBytes);
  if (!raw) return undefined;
  const h = raw.header;
  const correction = await resolveCorrections(options, h.channels * h.rows);
  const plan = planScan(h, { ...options, correction });
  const tally: ConversionTally = { rowsWithoutGood: 0 };
  const source: ProjectionSource = {
    geometry: plan.geometry,
    muWater: plan.muWater,
    notes: plan.notes,
    async read(v0, v1) {
      if (!(v0 >= 0 && v1 <= h.views && v0 < v1)) throw new RangeError(`views [${v0}, ${v1}) outside 0..${h.views}`);
      const data = await raw!.read(v0, v1);
      convertViews(data, plan, tally);
      return data;
    },
  };
  return { source, format: h.format, plan, tally, warnings: () => tallyWarnings(tally) };
}

/** NRRD with raw encoding, attached or detached; undefined for other encodings. */
async function nrrdViews(files: readonly ByteSource[], head: ByteSource, maxBytes?: number): Promise<RawViews | undefined> {
  const { fields, keys, dataStart } = parseNrrdHeader(await head.read(0, Math.min(head.size, HEAD_BYTES)));
  const { type, sizes, count, encoding, endian } = nrrdLayout(fields);
  if (encoding !== 'raw') return undefined;
  const header = projectionHeaderFromNrrd(sizes, keys);
  const name = nrrdDataFile(fields);
  let data: ByteSource = head, start = dataStart;
  if (name !== undefined) {
    const key = baseName(name).toLowerCase();
    const f = files.find((x) => baseName(x.name).toLowerCase() === key);
    if (!f) throw new InputError(`NRRD data file: the data file "${name}" was not given (files given: ${files.map((x) => baseName(x.name)).join(', ')})`);
    data = f;
    start = 0;
  }
  const need = count * SAMPLE_BYTES[type];
  // Offsets in the messages count from the start of the data, as the whole-file reader's do.
  const skip = byteSkip(fields, encoding, data.size - start, need);
  checkBytesPresent(data.size - start, skip, need, 'NRRD');
  return rawLayout(header, data, start + skip, type, endian !== 'big', maxBytes);
}

/** Views of `type` samples stored one after another from byte `start` of `file`. */
function rawLayout(header: ProjectionHeader, file: ByteSource, start: number, type: SampleType, littleEndian: boolean, maxBytes?: number): RawViews {
  const frame = header.channels * header.rows, bytes = frame * SAMPLE_BYTES[type];
  return {
    header,
    async read(v0, v1) {
      checkAllocation((v1 - v0) * frame * (4 + SAMPLE_BYTES[type]), { maxBytes }, `views ${v0} to ${v1 - 1}`);
      const src = await file.read(start + v0 * bytes, (v1 - v0) * bytes);
      const out = new Float32Array((v1 - v0) * frame);
      decodeSamples(src, type, littleEndian, out.length, out);
      return out;
    },
  };
}

/**
 * A folder of TIFF files, in natural name order, each holding as many frames as the first
 * (one per view, usually). Files are read whole, one at a time.
 */
async function tiffFrames(files: readonly ByteSource[], maxBytes?: number): Promise<RawViews> {
  const sorted = [...files].sort((a, b) => naturalOrder(baseName(a.name), baseName(b.name)));
  const first = await readTiffStack([await readWhole(sorted[0])], { maxBytes });
  const perFile = first.frames, frame = first.width * first.height;
  let cached: { index: number; data: Float32Array } | undefined = { index: 0, data: first.data };
  const fileFrames = async (index: number): Promise<Float32Array> => {
    if (cached?.index === index) return cached.data;
    const f = sorted[index];
    const s = await readTiffStack([await readWhole(f)], { maxBytes });
    if (s.width !== first.width || s.height !== first.height || s.frames !== perFile) {
      throw new InputError(`TIFF ${baseName(f.name)}: ${s.frames} frame(s) of ${s.width} x ${s.height} among files of ${perFile} frame(s) of ${first.width} x ${first.height}; every file must match`);
    }
    cached = { index, data: s.data };
    return s.data;
  };
  return {
    header: { channels: first.width, rows: first.height, views: sorted.length * perFile, format: 'TIFF', quantity: 'intensity' },
    async read(v0, v1) {
      const out = new Float32Array((v1 - v0) * frame);
      for (let v = v0; v < v1;) {
        const index = Math.floor(v / perFile), k = v % perFile;
        const take = Math.min(v1 - v, perFile - k);
        out.set((await fileFrames(index)).subarray(k * frame, (k + take) * frame), (v - v0) * frame);
        v += take;
      }
      return out;
    },
  };
}
