// TIFF stacks (multi-page files, or one frame per file in name order; TIFF or BigTIFF) of
// 8/16/32-bit integers or 32/64-bit floats, as float32 frames. The structure is checked first
// (tiff-structure.ts); uncompressed strips, the usual case for detector frames, are converted
// straight from the file bytes (one copy); compressed strips and tiles (LZW, PackBits, deflate;
// horizontal differencing undone) are decoded piece by piece into one frame of file-order bytes,
// each piece bounded by the size it must have (tiff-codecs.ts, and the platform's inflate).
import { InputError } from '../errors';
import { inflate } from './gzip';
import { checkAllocation, type ReadLimits } from './limits';
import { baseName, naturalOrder, type NamedBytes } from './named-file';
import { decodeSamples, type SampleType } from './sample-types';
import { lzwDecode, packBitsDecode, undoHorizontalDifferencing } from './tiff-codecs';
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

/** Decompresses one piece (strip or tile) into exactly `size` bytes. */
async function decompress(src: Uint8Array, p: TiffPage, size: number, what: string): Promise<Uint8Array> {
  switch (p.compression) {
    case 1:
      if (src.length < size) throw new InputError(`${what} holds ${src.length} bytes, ${size} expected`);
      return src.subarray(0, size);
    case 5:
      return lzwDecode(src, size, what);
    case 32773:
      return packBitsDecode(src, size, what);
    default: {
      const out = await inflate(src, 'deflate', size);
      if (out.length < size) throw new InputError(`${what}: deflate data hold ${out.length} bytes, ${size} expected`);
      return out;
    }
  }
}

/**
 * The page's samples in file byte order, frame layout (rows of `width`), from its compressed
 * strips or its tiles (tiles at the right and bottom edges are cut to the image).
 */
async function pageBytes(bytes: Uint8Array, p: TiffPage, le: boolean): Promise<Uint8Array> {
  const bytesPer = p.bitsPerSample / 8;
  const frame = new Uint8Array(p.width * p.height * bytesPer);
  const piece = (s: number) => bytes.subarray(p.offsets[s], p.offsets[s] + p.byteCounts[s]);
  if (!p.tile) {
    for (let s = 0; s < p.offsets.length; s++) {
      const rows = Math.min(p.rowsPerStrip, p.height - s * p.rowsPerStrip);
      const data = await decompress(piece(s), p, rows * p.width * bytesPer, `TIFF strip ${s} of the page at byte ${p.ifdOffset}`);
      const copy = p.predictor === 2 ? data.slice() : data;
      if (p.predictor === 2) undoHorizontalDifferencing(copy, p.width, rows, bytesPer, le);
      frame.set(copy, s * p.rowsPerStrip * p.width * bytesPer);
    }
    return frame;
  }
  const { width: tw, height: th } = p.tile;
  const across = Math.ceil(p.width / tw);
  for (let s = 0; s < p.offsets.length; s++) {
    const data = (await decompress(piece(s), p, tw * th * bytesPer, `TIFF tile ${s} of the page at byte ${p.ifdOffset}`)).slice();
    if (p.predictor === 2) undoHorizontalDifferencing(data, tw, th, bytesPer, le);
    const x0 = (s % across) * tw, y0 = Math.floor(s / across) * th;
    const w = Math.min(tw, p.width - x0) * bytesPer;
    for (let r = 0; r < th && y0 + r < p.height; r++) {
      frame.set(data.subarray(r * tw * bytesPer, r * tw * bytesPer + w), ((y0 + r) * p.width + x0) * bytesPer);
    }
  }
  return frame;
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
  // A compressed or tiled page needs its frame of file bytes plus one decoded piece at a time.
  const decodeBytes = frames.some((f) => f.page.compression !== 1 || f.page.tile) ? (2 * frameSize * first.bitsPerSample) / 8 : 0;
  checkAllocation(frames.length * frameSize * 4 + decodeBytes, limits, `TIFF stack of ${frames.length} frames of ${first.width} x ${first.height}`);
  const data = new Float32Array(frames.length * frameSize);
  for (let k = 0; k < frames.length; k++) {
    const { file, tiff, page } = frames[k];
    try {
      if (page.compression === 1 && !page.tile && page.predictor === 1) decodeStrips(file.bytes, page, tiff.littleEndian, data, k * frameSize);
      else decodeSamples(await pageBytes(file.bytes, page, tiff.littleEndian), sampleTypeOf(page), tiff.littleEndian, frameSize, data, k * frameSize);
    } catch (err) {
      if (err instanceof InputError) throw new InputError(`${baseName(file.name)}: ${err.message}`);
      throw err;
    }
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
