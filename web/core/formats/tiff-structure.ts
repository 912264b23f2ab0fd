// The structure of a TIFF file (TIFF 6.0, Adobe 1992: header section 2, IFDs section 2,
// baseline tags section 8; BigTIFF, the 64-bit variant of the Aware Systems / libtiff BigTIFF
// proposal: version 43, 8-byte offsets and counts, 20-byte entries), walked with bounds and cycle
// checks before any decoder sees it: every IFD and every tag value must lie inside the file, the
// IFD chain must end, and only the image layouts we can decode are accepted. Pixel decoding is
// done elsewhere (tiff.ts).
import { InputError } from '../errors';

/** One image (IFD) as far as projection and image stacks need it. */
export interface TiffPage {
  ifdOffset: number;
  width: number;
  height: number;
  bitsPerSample: number;
  /** 1 unsigned integer, 2 signed integer, 3 IEEE float (tag 339). */
  sampleFormat: number;
  /** 1 none, 5 LZW, 8/32946 deflate, 32773 PackBits. */
  compression: number;
  /** 1 none, 2 horizontal differencing. */
  predictor: number;
  /** Strip (or tile) offsets and byte counts. */
  offsets: number[];
  byteCounts: number[];
  rowsPerStrip: number;
  tile?: { width: number; height: number };
  /** NewSubfileType bit 0: a reduced-resolution copy (a thumbnail), not a frame. */
  reduced: boolean;
}

export interface TiffFile {
  littleEndian: boolean;
  /** A BigTIFF file (64-bit offsets). */
  big: boolean;
  pages: TiffPage[];
}

/** Bytes per value of each field type (TIFF 6.0 section 2; 16 LONG8, 17 SLONG8, 18 IFD8 of BigTIFF). */
const TYPE_SIZES: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4, 16: 8, 17: 8, 18: 8 };
/** Tags that make a decoder follow offsets into private sub-structures (SubIFDs, MakerNote, DNG). */
const NESTING_TAGS = new Set([330, 37500, 50740]);
const EXIF_IFD = 34665;
const MAX_PAGES = 1_000_000;
const MAX_ENTRIES = 4096;
const SUPPORTED_COMPRESSION = new Set([1, 5, 8, 32773, 32946]);

interface Entry {
  type: number;
  count: number;
  valueOffset: number;
}

class Reader {
  constructor(readonly bytes: Uint8Array, readonly view: DataView, readonly le: boolean, readonly big: boolean) {}
  u16(o: number): number {
    this.need(o, 2);
    return this.view.getUint16(o, this.le);
  }
  u32(o: number): number {
    this.need(o, 4);
    return this.view.getUint32(o, this.le);
  }
  /** An unsigned 64-bit value, which must fit a double exactly (offsets and counts do: they lie inside the file). */
  u64(o: number): number {
    this.need(o, 8);
    const lo = this.view.getUint32(o + (this.le ? 0 : 4), this.le), hi = this.view.getUint32(o + (this.le ? 4 : 0), this.le);
    const v = hi * 2 ** 32 + lo;
    if (v > Number.MAX_SAFE_INTEGER) throw new InputError(`TIFF: a 64-bit value at byte ${o} is beyond any file size`);
    return v;
  }
  /** An offset: 4 bytes, 8 in BigTIFF. */
  offset(o: number): number {
    return this.big ? this.u64(o) : this.u32(o);
  }
  need(o: number, n: number): void {
    if (o < 0 || o + n > this.bytes.length) throw new InputError(`TIFF: a structure at byte ${o} runs past the end of the file (${this.bytes.length} bytes)`);
  }
}

function readEntries(r: Reader, offset: number): { entries: Map<number, Entry>; next: number } {
  const [countBytes, entryBytes, inline] = r.big ? [8, 20, 8] : [2, 12, 4];
  const n = r.big ? r.u64(offset) : r.u16(offset);
  if (n === 0 || n > MAX_ENTRIES) throw new InputError(`TIFF: the directory at byte ${offset} has ${n} entries, expected 1 to ${MAX_ENTRIES}`);
  r.need(offset + countBytes, n * entryBytes + inline);
  const entries = new Map<number, Entry>();
  for (let i = 0; i < n; i++) {
    const e = offset + countBytes + i * entryBytes;
    const tag = r.u16(e), type = r.u16(e + 2), count = r.big ? r.u64(e + 4) : r.u32(e + 4);
    const size = TYPE_SIZES[type];
    if (!size) continue; // unknown types are skipped by readers (TIFF 6.0, section 2)
    const bytes = size * count;
    const valueAt = e + (r.big ? 12 : 8);
    const valueOffset = bytes <= inline ? valueAt : r.offset(valueAt);
    r.need(valueOffset, bytes);
    if (type === 2 && count === 0) throw new InputError(`TIFF: tag ${tag} is an empty ASCII value`);
    entries.set(tag, { type, count, valueOffset });
  }
  return { entries, next: r.offset(offset + countBytes + n * entryBytes) };
}

function values(r: Reader, entries: Map<number, Entry>, tag: number): number[] | undefined {
  const e = entries.get(tag);
  if (!e) return undefined;
  const out: number[] = [];
  for (let i = 0; i < e.count; i++) {
    if (e.type === 3) out.push(r.u16(e.valueOffset + 2 * i));
    else if (e.type === 4) out.push(r.u32(e.valueOffset + 4 * i));
    else if (e.type === 1) out.push(r.bytes[e.valueOffset + i]);
    else if (e.type === 16 || e.type === 18) out.push(r.u64(e.valueOffset + 8 * i));
    else throw new InputError(`TIFF: tag ${tag} has type ${e.type}, expected an integer type`);
  }
  return out;
}

function one(r: Reader, entries: Map<number, Entry>, tag: number, name: string, fallback?: number): number {
  const v = values(r, entries, tag);
  if (v === undefined || v.length === 0) {
    if (fallback === undefined) throw new InputError(`TIFF: the ${name} tag (${tag}) is missing`);
    return fallback;
  }
  return v[0];
}

function checkNesting(r: Reader, entries: Map<number, Entry>, at: number): void {
  for (const t of NESTING_TAGS) {
    if (entries.has(t)) throw new InputError(`TIFF: the directory at byte ${at} carries tag ${t} (sub-images or maker notes of camera raw files), which projection stacks do not use`);
  }
  const exif = entries.get(EXIF_IFD);
  if (exif) {
    const sub = readEntries(r, exif.type === 16 || exif.type === 18 ? r.u64(exif.valueOffset) : r.u32(exif.valueOffset)).entries;
    for (const t of [...NESTING_TAGS, EXIF_IFD]) {
      if (sub.has(t)) throw new InputError(`TIFF: the EXIF directory nests tag ${t}, which is not accepted`);
    }
  }
}

function readPage(r: Reader, entries: Map<number, Entry>, at: number): TiffPage {
  checkNesting(r, entries, at);
  const width = one(r, entries, 256, 'ImageWidth');
  const height = one(r, entries, 257, 'ImageLength');
  if (width < 1 || height < 1) throw new InputError(`TIFF: image size ${width} x ${height}, expected positive sizes`);
  const spp = one(r, entries, 277, 'SamplesPerPixel', 1);
  if (spp !== 1) throw new InputError(`TIFF SamplesPerPixel: got ${spp}, expected 1 (grey-level frames, not colour)`);
  const bps = values(r, entries, 258) ?? [1];
  if (bps.length !== 1 || ![8, 16, 32, 64].includes(bps[0])) throw new InputError(`TIFF BitsPerSample: got ${bps.join(',')}, expected 8, 16, 32 or 64`);
  const sampleFormat = one(r, entries, 339, 'SampleFormat', 1);
  if (![1, 2, 3].includes(sampleFormat)) throw new InputError(`TIFF SampleFormat: got ${sampleFormat}, expected 1 (unsigned), 2 (signed) or 3 (float)`);
  if (sampleFormat === 3 && bps[0] < 32) throw new InputError(`TIFF: ${bps[0]}-bit floats are not read, expected 32 or 64 bits`);
  const compression = one(r, entries, 259, 'Compression', 1);
  if (!SUPPORTED_COMPRESSION.has(compression)) {
    throw new InputError(`TIFF Compression: got ${compression}, expected 1 (none), 5 (LZW), 8 (deflate) or 32773 (PackBits); save the stack uncompressed`);
  }
  const predictor = one(r, entries, 317, 'Predictor', 1);
  if (predictor !== 1 && !(predictor === 2 && sampleFormat !== 3 && bps[0] <= 32)) {
    throw new InputError(`TIFF Predictor: got ${predictor} for ${bps[0]}-bit ${sampleFormat === 3 ? 'floats' : 'integers'}, expected none (1) or horizontal differencing (2) of integers up to 32 bits`);
  }
  if (one(r, entries, 284, 'PlanarConfiguration', 1) !== 1 && spp !== 1) throw new InputError('TIFF PlanarConfiguration: expected 1');
  const reduced = (one(r, entries, 254, 'NewSubfileType', 0) & 1) === 1;
  const tiled = entries.has(322);
  const offsets = values(r, entries, tiled ? 324 : 273);
  const byteCounts = values(r, entries, tiled ? 325 : 279);
  if (!offsets || !byteCounts || offsets.length !== byteCounts.length || offsets.length === 0) {
    throw new InputError(`TIFF: the directory at byte ${at} lacks matching ${tiled ? 'tile' : 'strip'} offsets and byte counts`);
  }
  for (let i = 0; i < offsets.length; i++) r.need(offsets[i], byteCounts[i]);
  const page: TiffPage = {
    ifdOffset: at, width, height, bitsPerSample: bps[0], sampleFormat, compression, predictor,
    offsets, byteCounts, rowsPerStrip: Math.min(one(r, entries, 278, 'RowsPerStrip', height), height), reduced,
  };
  if (page.rowsPerStrip < 1) throw new InputError('TIFF RowsPerStrip: got 0, expected at least 1');
  if (tiled) {
    const tw = one(r, entries, 322, 'TileWidth'), th = one(r, entries, 323, 'TileLength');
    if (tw < 1 || th < 1 || tw > 65536 || th > 65536) throw new InputError(`TIFF tile size ${tw} x ${th}: expected 1 to 65536`);
    if (offsets.length !== Math.ceil(width / tw) * Math.ceil(height / th)) throw new InputError(`TIFF: ${offsets.length} tiles given, ${Math.ceil(width / tw) * Math.ceil(height / th)} expected for ${width} x ${height}`);
    page.tile = { width: tw, height: th };
  } else if (offsets.length !== Math.ceil(height / page.rowsPerStrip)) {
    throw new InputError(`TIFF: ${offsets.length} strips given, ${Math.ceil(height / page.rowsPerStrip)} expected for ${height} rows of ${page.rowsPerStrip}`);
  }
  return page;
}

/** Whether bytes start like a classic or big TIFF. */
export function looksLikeTiff(b: Uint8Array): boolean {
  return b.length >= 4 && ((b[0] === 0x49 && b[1] === 0x49 && b[2] === 42 && b[3] === 0) || (b[0] === 0x4d && b[1] === 0x4d && b[2] === 0 && (b[3] === 42 || b[3] === 43)) || (b[0] === 0x49 && b[1] === 0x49 && b[2] === 43 && b[3] === 0));
}

/** Walks a TIFF file's directories and returns its image pages (thumbnails included, marked). */
export function readTiffStructure(bytes: Uint8Array): TiffFile {
  if (bytes.length < 8) throw new InputError(`TIFF: ${bytes.length} bytes is too short for a header`);
  const order = String.fromCharCode(bytes[0], bytes[1]);
  if (order !== 'II' && order !== 'MM') throw new InputError('TIFF: the file does not start with II or MM');
  const le = order === 'II';
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const version = view.getUint16(2, le);
  if (version !== 42 && version !== 43) throw new InputError(`TIFF: version ${version}, expected 42 (TIFF) or 43 (BigTIFF)`);
  const big = version === 43;
  const r = new Reader(bytes, view, le, big);
  if (big && (r.u16(4) !== 8 || r.u16(6) !== 0)) throw new InputError(`TIFF: a BigTIFF header with offsets of ${r.u16(4)} bytes, expected 8`);
  const pages: TiffPage[] = [];
  const seen = new Set<number>();
  let offset = big ? r.u64(8) : r.u32(4);
  while (offset !== 0) {
    if (seen.has(offset)) throw new InputError(`TIFF: the directory chain loops back to byte ${offset}`);
    if (pages.length >= MAX_PAGES) throw new InputError(`TIFF: more than ${MAX_PAGES} pages`);
    seen.add(offset);
    const { entries, next } = readEntries(r, offset);
    pages.push(readPage(r, entries, offset));
    offset = next;
  }
  return { littleEndian: le, big, pages };
}
