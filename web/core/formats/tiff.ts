// TIFF stacks (multi-page files, or one frame per file in name order) of 8/16/32-bit integers
// or 32/64-bit floats, as float32 frames. The structure is checked first (tiff-structure.ts);
// uncompressed strips, the usual case for detector frames, are converted straight from the
// file bytes (one copy); compressed pages (deflate) and tiles are decoded by UTIF
// (npm "utif", Photopea), after deflate streams were checked to inflate within their size.
import UTIF from 'utif';
import { InputError } from '../errors';
import { inflate } from './gzip';
import { checkAllocation, type ReadLimits } from './limits';
import { baseName, naturalOrder, type NamedBytes } from './named-file';
import { decodeSamples, type SampleType } from './sample-types';
import { readTiffStructure, type TiffPage } from './tiff-structure';

/** A stack of frames, frame after frame, each `height` rows of `width` values. */
export interface FrameStack {
  width: number;
  height: number;
  frames: number;
  data: Float32Array;
}

function sampleTypeOf(p: TiffPage): SampleType {
  const bits = p.bitsPerSample;
  if (p.sampleFormat === 3) return bits === 64 ? 'float64' : 'float32';
  const signed = p.sampleFormat === 2;
  if (bits === 8) return signed ? 'int8' : 'uint8';
  if (bits === 16) return signed ? 'int16' : 'uint16';
  if (bits === 32) return signed ? 'int32' : 'uint32';
  throw new InputError(`TIFF: ${bits}-bit integers are not read`);
}

function decodeStrips(bytes: Uint8Array, p: TiffPage, le: boolean, out: Float32Array, at: number): void {
  const type = sampleTypeOf(p);
  const rowBytes = (p.width * p.bitsPerSample) / 8;
  for (let s = 0; s < p.offsets.length; s++) {
    const rows = Math.min(p.rowsPerStrip, p.height - s * p.rowsPerStrip);
    const need = rows * rowBytes;
    if (p.byteCounts[s] < need) throw new InputError(`TIFF: strip ${s} of the page at byte ${p.ifdOffset} holds ${p.byteCounts[s]} bytes, ${need} expected`);
    decodeSamples(bytes.subarray(p.offsets[s], p.offsets[s] + need), type, le, rows * p.width, out, at + s * p.rowsPerStrip * p.width);
  }
}

/** Pieces of a compressed page (strips or tiles) and the bytes each may expand to. */
function pieceSizes(p: TiffPage): number[] {
  const bytesPer = p.bitsPerSample / 8;
  if (p.tile) return p.offsets.map(() => p.tile!.width * p.tile!.height * bytesPer);
  return p.offsets.map((_, s) => Math.min(p.rowsPerStrip, p.height - s * p.rowsPerStrip) * p.width * bytesPer);
}

async function checkDeflate(bytes: Uint8Array, p: TiffPage): Promise<void> {
  const sizes = pieceSizes(p);
  for (let s = 0; s < p.offsets.length; s++) {
    await inflate(bytes.subarray(p.offsets[s], p.offsets[s] + p.byteCounts[s]), 'deflate', sizes[s]);
  }
}

interface UtifPage extends Record<string, unknown> {
  data?: Uint8Array;
}

function decodeWithUtif(buffer: ArrayBuffer, ifds: UtifPage[], index: number, p: TiffPage, le: boolean, out: Float32Array, at: number): void {
  const ifd = ifds[index];
  if (!ifd) throw new InputError(`TIFF: page ${index} could not be read`);
  ifd.t278 = [p.rowsPerStrip]; // bounded as checked (a huge RowsPerStrip would drive UTIF's row loops)
  try {
    UTIF.decodeImage(buffer, ifd, ifds);
  } catch (err) {
    throw new InputError(`TIFF: page ${index} cannot be decoded (${err instanceof Error ? err.message : String(err)})`);
  }
  const n = p.width * p.height;
  const bytesPer = p.bitsPerSample / 8;
  const decoded = ifd.data;
  if (!decoded || decoded.length < n * bytesPer) throw new InputError(`TIFF: page ${index} decodes to ${decoded?.length ?? 0} bytes, ${n * bytesPer} expected`);
  // UTIF returns 16-bit samples little-endian and other sizes in the file's byte order.
  decodeSamples(decoded, sampleTypeOf(p), p.bitsPerSample === 16 ? true : le, n, out, at);
  delete ifd.data;
}

function wholeBuffer(bytes: Uint8Array): ArrayBuffer {
  if (bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength && bytes.buffer instanceof ArrayBuffer) return bytes.buffer;
  return bytes.slice().buffer;
}

/**
 * Reads TIFF files as one stack: the pages of each file (thumbnails skipped), files in natural
 * name order. Every frame must have the size and sample type of the first.
 */
export async function readTiffStack(files: readonly NamedBytes[], limits?: ReadLimits): Promise<FrameStack> {
  const sorted = [...files].sort((a, b) => naturalOrder(baseName(a.name), baseName(b.name)));
  const parsed = sorted.map((f) => {
    try {
      return { file: f, tiff: readTiffStructure(f.bytes) };
    } catch (err) {
      if (err instanceof InputError) throw new InputError(`${baseName(f.name)}: ${err.message}`);
      throw err;
    }
  });
  const frames = parsed.flatMap((x) => x.tiff.pages.filter((p) => !p.reduced).map((p) => ({ ...x, page: p })));
  if (frames.length === 0) throw new InputError('TIFF: no image pages found');
  const first = frames[0].page;
  for (const f of frames) {
    const p = f.page;
    if (p.width !== first.width || p.height !== first.height || p.bitsPerSample !== first.bitsPerSample || p.sampleFormat !== first.sampleFormat) {
      throw new InputError(`TIFF ${baseName(f.file.name)}: a ${p.width} x ${p.height} ${p.bitsPerSample}-bit page among ${first.width} x ${first.height} ${first.bitsPerSample}-bit pages; every frame must match`);
    }
  }
  const frameSize = first.width * first.height;
  const decodeBytes = frames.some((f) => f.page.compression !== 1 || f.page.tile) ? (frameSize * first.bitsPerSample) / 8 : 0;
  checkAllocation(frames.length * frameSize * 4 + decodeBytes, limits, `TIFF stack of ${frames.length} frames of ${first.width} x ${first.height}`);
  const data = new Float32Array(frames.length * frameSize);
  const utif = new Map<NamedBytes, { buffer: ArrayBuffer; ifds: UtifPage[] }>();
  for (let k = 0; k < frames.length; k++) {
    const { file, tiff, page } = frames[k];
    if (page.compression === 1 && !page.tile) {
      decodeStrips(file.bytes, page, tiff.littleEndian, data, k * frameSize);
      continue;
    }
    if (page.compression === 8 || page.compression === 32946) await checkDeflate(file.bytes, page);
    let u = utif.get(file);
    if (!u) {
      const buffer = wholeBuffer(file.bytes);
      u = { buffer, ifds: UTIF.decode(buffer) as UtifPage[] };
      utif.set(file, u);
    }
    decodeWithUtif(u.buffer, u.ifds, tiff.pages.indexOf(page), page, tiff.littleEndian, data, k * frameSize);
  }
  return { width: first.width, height: first.height, frames: frames.length, data };
}

/**
 * Writes frames as an uncompressed little-endian multi-page TIFF of 32-bit floats or (rounded,
 * clamped) 16-bit unsigned integers, one strip per page (for tests, benchmarks and export).
 */
export function writeTiffStack(stack: FrameStack, sampleType: 'float32' | 'uint16' = 'float32'): Uint8Array {
  const { width, height, frames } = stack;
  const bytesPer = sampleType === 'uint16' ? 2 : 4;
  const frameBytes = width * height * bytesPer;
  const entries: Array<[number, number, number]> = [
    [256, 4, width], [257, 4, height], [258, 3, bytesPer * 8], [259, 3, 1], [262, 3, 1], [273, 4, 0],
    [277, 3, 1], [278, 4, height], [279, 4, frameBytes], [284, 3, 1], [339, 3, sampleType === 'uint16' ? 1 : 3],
  ];
  const ifdBytes = 2 + entries.length * 12 + 4;
  const out = new Uint8Array(8 + frames * (ifdBytes + frameBytes));
  const v = new DataView(out.buffer);
  out.set([0x49, 0x49, 42, 0]);
  v.setUint32(4, 8, true);
  const n = width * height;
  for (let f = 0; f < frames; f++) {
    const ifd = 8 + f * (ifdBytes + frameBytes);
    const dataAt = ifd + ifdBytes;
    v.setUint16(ifd, entries.length, true);
    entries.forEach(([tag, type, value], i) => {
      const e = ifd + 2 + i * 12;
      v.setUint16(e, tag, true);
      v.setUint16(e + 2, type, true);
      v.setUint32(e + 4, 1, true);
      const val = tag === 273 ? dataAt : value;
      if (type === 3) v.setUint16(e + 8, val, true);
      else v.setUint32(e + 8, val, true);
    });
    v.setUint32(ifd + ifdBytes - 4, f + 1 < frames ? dataAt + frameBytes : 0, true);
    for (let i = 0; i < n; i++) {
      const x = stack.data[f * n + i];
      if (sampleType === 'float32') v.setFloat32(dataAt + 4 * i, x, true);
      else v.setUint16(dataAt + 2 * i, Math.min(65535, Math.max(0, Math.round(x) || 0)), true);
    }
  }
  return out;
}
