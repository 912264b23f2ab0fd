// NRRD (Teem's "nearly raw raster data", http://teem.sourceforge.net/nrrd/format.html):
// a text header of "field: value" lines and "key:=value" pairs, a blank line, then the data,
// or a detached header (.nhdr) whose "data file" names the data. This reader handles raw,
// gzip and ascii encodings, every numeric type, either endianness and "byte skip", and
// converts samples to float32. Sizes are checked against the bytes present and the memory
// ceiling before anything is allocated.
import { InputError } from '../errors';
import { gunzip, gzip } from './gzip';
import { checkAllocation, checkBytesPresent, sampleCount, type ReadLimits } from './limits';
import { companion, type NamedBytes } from './named-file';
import { decodeSamples, encodeSamples, SAMPLE_BYTES, type SampleType } from './sample-types';

export interface Nrrd {
  /** Standard fields, lower-case names. */
  fields: Record<string, string>;
  /** Key/value pairs ("key:=value"). */
  keys: Record<string, string>;
  sizes: number[];
  data: Float32Array;
}

export interface NrrdReadOptions extends ReadLimits {
  /** Other files given with the header (the detached data file of a .nhdr). */
  files?: readonly NamedBytes[];
}

/** NRRD type names and their aliases (format spec, "type"). */
const TYPE_ALIASES: Record<string, SampleType> = {
  'signed char': 'int8', int8_t: 'int8', int8: 'int8', uchar: 'uint8', 'unsigned char': 'uint8', uint8_t: 'uint8', uint8: 'uint8',
  short: 'int16', 'short int': 'int16', 'signed short': 'int16', 'signed short int': 'int16', int16_t: 'int16', int16: 'int16',
  ushort: 'uint16', 'unsigned short': 'uint16', 'unsigned short int': 'uint16', uint16_t: 'uint16', uint16: 'uint16',
  int: 'int32', 'signed int': 'int32', int32_t: 'int32', int32: 'int32', uint: 'uint32', 'unsigned int': 'uint32', uint32_t: 'uint32', uint32: 'uint32',
  float: 'float32', double: 'float64',
};

const MAX_HEADER = 1 << 20;

function headerEnd(bytes: Uint8Array): { end: number; dataStart: number } {
  const limit = Math.min(bytes.length, MAX_HEADER);
  for (let i = 0; i < limit - 1; i++) {
    if (bytes[i] === 10 && bytes[i + 1] === 10) return { end: i, dataStart: i + 2 };
    if (bytes[i] === 10 && bytes[i + 1] === 13 && bytes[i + 2] === 10) return { end: i, dataStart: i + 3 };
  }
  // A detached header may simply end with the file.
  if (bytes.length <= MAX_HEADER) return { end: bytes.length, dataStart: bytes.length };
  throw new InputError('NRRD: no blank line ends the header within the first MiB');
}

/** Parses the header at the start of `bytes` (fields lower-cased, key/value pairs, where the data start). */
export function parseNrrdHeader(bytes: Uint8Array): { fields: Record<string, string>; keys: Record<string, string>; dataStart: number } {
  const magic = new TextDecoder().decode(bytes.subarray(0, 8));
  if (!/^NRRD000[1-5]$/.test(magic)) throw new InputError('NRRD: the file does not start with "NRRD000x"');
  const { end, dataStart } = headerEnd(bytes);
  const lines = new TextDecoder().decode(bytes.subarray(0, end)).split(/\r?\n/).slice(1);
  const fields: Record<string, string> = {};
  const keys: Record<string, string> = {};
  for (const line of lines) {
    if (line.startsWith('#') || line.trim() === '') continue;
    const kv = line.indexOf(':=');
    const f = line.indexOf(': ');
    if (kv >= 0 && (f < 0 || kv < f)) keys[line.slice(0, kv)] = line.slice(kv + 2);
    else if (f >= 0) fields[line.slice(0, f).trim().toLowerCase()] = line.slice(f + 2).trim();
    else throw new InputError(`NRRD: cannot read header line "${line.slice(0, 60)}"`);
  }
  return { fields, keys, dataStart };
}

/** The bytes that hold the (possibly compressed) data: attached, or the named data file. */
function dataSource(bytes: Uint8Array, dataStart: number, fields: Record<string, string>, files: readonly NamedBytes[]): Uint8Array {
  const detached = nrrdDataFile(fields);
  return detached ? companion(files, detached, 'NRRD data file').bytes : bytes.subarray(dataStart);
}

/** Bytes to skip before the data ("byte skip"; -1: the data end the raw file). */
export function byteSkip(fields: Record<string, string>, encoding: string, available: number, need: number): number {
  const text = fields['byte skip'] ?? fields.byteskip;
  if (text === undefined) return 0;
  const skip = Number(text);
  if (skip === -1 && encoding === 'raw') return available - need;
  if (!Number.isSafeInteger(skip) || skip < 0) throw new InputError(`NRRD byte skip: got "${text}", expected a whole number >= 0 (or -1 for raw data)`);
  return skip;
}

function parseAscii(src: Uint8Array, count: number, out: Float32Array): void {
  const text = new TextDecoder().decode(src);
  let n = 0;
  for (const m of text.matchAll(/[^\s,]+/g)) {
    if (n >= count) break;
    const v = Number(m[0]);
    if (Number.isNaN(v) && m[0].toLowerCase() !== 'nan') throw new InputError(`NRRD ascii data: got "${m[0].slice(0, 20)}" at sample ${n}, expected a number`);
    out[n++] = v;
  }
  if (n < count) throw new InputError(`NRRD ascii data: the header promises ${count} samples, the file holds ${n}`);
}

/** Sample type, sizes, sample count, encoding and byte order a header announces (checked). */
export function nrrdLayout(fields: Record<string, string>): { type: SampleType; sizes: number[]; count: number; encoding: string; endian: string } {
  const type = TYPE_ALIASES[fields.type ?? ''];
  if (!type) throw new InputError(`NRRD type: got "${fields.type}", expected a numeric type (int8 ... double)`);
  const dim = Number(fields.dimension);
  if (!Number.isInteger(dim) || dim < 1 || dim > 16) throw new InputError(`NRRD dimension: got "${fields.dimension}", expected 1 to 16`);
  const sizes = (fields.sizes ?? '').split(/\s+/).filter(Boolean).map(Number);
  if (sizes.length !== dim || sizes.some((s) => !Number.isSafeInteger(s) || s < 1)) {
    throw new InputError(`NRRD sizes: got "${fields.sizes}", expected ${dim} positive whole numbers`);
  }
  const count = sampleCount(sizes, 'NRRD sizes');
  const encoding = (fields.encoding ?? '').toLowerCase();
  const endian = (fields.endian ?? 'little').toLowerCase();
  if (SAMPLE_BYTES[type] > 1 && encoding !== 'ascii' && endian !== 'little' && endian !== 'big') {
    throw new InputError(`NRRD endian: got "${fields.endian}", expected little or big`);
  }
  return { type, sizes, count, encoding, endian };
}

/** The detached data file a header names, or undefined for attached data. */
export function nrrdDataFile(fields: Record<string, string>): string | undefined {
  const detached = fields['data file'] ?? fields.datafile;
  if (!detached) return undefined;
  const parts = detached.split(/\s+/);
  if (parts.length !== 1 || parts[0] === 'LIST') {
    throw new InputError(`NRRD data file: got "${detached.slice(0, 60)}", expected the name of one data file`);
  }
  return parts[0];
}

/** Parses NRRD bytes. Throws InputError for anything it cannot trust. */
export async function parseNrrd(bytes: Uint8Array, options: NrrdReadOptions = {}): Promise<Nrrd> {
  const { fields, keys, dataStart } = parseNrrdHeader(bytes);
  const { type, sizes, count, encoding, endian } = nrrdLayout(fields);
  const need = count * SAMPLE_BYTES[type];
  const src = dataSource(bytes, dataStart, fields, options.files ?? []);
  let raw: Uint8Array;
  const data = (extra: number) => {
    checkAllocation(count * 4 + extra, options, `NRRD sizes ${sizes.join(' x ')}`);
    return new Float32Array(count);
  };
  if (encoding === 'raw') {
    const skip = byteSkip(fields, encoding, src.length, need);
    checkBytesPresent(src.length, skip, need, 'NRRD');
    raw = src.subarray(skip, skip + need);
  } else if (encoding === 'gzip' || encoding === 'gz') {
    checkAllocation(count * 4 + need, options, `NRRD sizes ${sizes.join(' x ')}`);
    const skip = byteSkip(fields, encoding, src.length, need);
    if (skip > src.length) throw new InputError(`NRRD byte skip: ${skip} bytes, the file holds ${src.length}`);
    const inflated = await gunzip(src.subarray(skip), need);
    if (inflated.length < need) throw new InputError(`NRRD: the header promises ${need} bytes of data, the gzip stream holds ${inflated.length}`);
    raw = inflated;
  } else if (encoding === 'ascii' || encoding === 'text' || encoding === 'txt') {
    const out = data(src.length * 2);
    parseAscii(src, count, out);
    return { fields, keys, sizes, data: out };
  } else {
    throw new InputError(`NRRD encoding: got "${fields.encoding}", expected raw, gzip or ascii`);
  }
  const out = data(0);
  decodeSamples(raw, type, endian !== 'big', count, out);
  return { fields, keys, sizes, data: out };
}

/** Sample types the writer produces. */
export type WrittenType = 'float32' | 'int16';

/** The header of an NRRD file (attached data follow it), for writers that stream the data. */
export function nrrdHeaderBytes(sizes: number[], fields: Record<string, string>, keys: Record<string, string>, compress = false, type: WrittenType = 'float32'): Uint8Array {
  const lines = ['NRRD0004', '# Written by Rimfill', `type: ${type === 'int16' ? 'short' : 'float'}`, `dimension: ${sizes.length}`, `sizes: ${sizes.join(' ')}`, 'endian: little', `encoding: ${compress ? 'gzip' : 'raw'}`];
  for (const [k, v] of Object.entries(fields)) lines.push(`${k}: ${v}`);
  for (const [k, v] of Object.entries(keys)) {
    if (/[\r\n]/.test(v) || k.includes(':=')) throw new Error(`NRRD key ${k}: values must be one line`);
    lines.push(`${k}:=${v}`);
  }
  return new TextEncoder().encode(`${lines.join('\n')}\n\n`);
}

/**
 * Serializes samples with the given fields and key/value pairs, little-endian, as float32 or
 * (rounded, clamped) int16.
 */
export async function writeNrrd(
  data: Float32Array, sizes: number[], fields: Record<string, string>, keys: Record<string, string>, compress = false, type: WrittenType = 'float32',
): Promise<Uint8Array> {
  const head = nrrdHeaderBytes(sizes, fields, keys, compress, type);
  let body = encodeSamples(data, type).bytes;
  if (compress) body = await gzip(body);
  const out = new Uint8Array(head.length + body.length);
  out.set(head);
  out.set(body, head.length);
  return out;
}
