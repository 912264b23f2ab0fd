// NRRD (Teem's "nearly raw raster data", http://teem.sourceforge.net/nrrd/format.html):
// a text header of "field: value" lines and "key:=value" pairs, a blank line, then the data.
// This reader handles attached data, raw or gzip, any numeric type and either endianness,
// and converts samples to float32.
import { InputError } from '../errors';
import { gunzip, gzip } from './gzip';

export interface Nrrd {
  /** Standard fields, lower-case names. */
  fields: Record<string, string>;
  /** Key/value pairs ("key:=value"). */
  keys: Record<string, string>;
  sizes: number[];
  data: Float32Array;
}

/** Largest sample count a reader accepts unless told otherwise (2^28 floats = 1 GiB). */
export const DEFAULT_MAX_SAMPLES = 2 ** 28;

const TYPES: Record<string, { bytes: number; read: (v: DataView, o: number, le: boolean) => number }> = {
  int8: { bytes: 1, read: (v, o) => v.getInt8(o) },
  uint8: { bytes: 1, read: (v, o) => v.getUint8(o) },
  int16: { bytes: 2, read: (v, o, le) => v.getInt16(o, le) },
  uint16: { bytes: 2, read: (v, o, le) => v.getUint16(o, le) },
  int32: { bytes: 4, read: (v, o, le) => v.getInt32(o, le) },
  uint32: { bytes: 4, read: (v, o, le) => v.getUint32(o, le) },
  float: { bytes: 4, read: (v, o, le) => v.getFloat32(o, le) },
  double: { bytes: 8, read: (v, o, le) => v.getFloat64(o, le) },
};

/** NRRD type names and their aliases (format spec, "type"). */
const TYPE_ALIASES: Record<string, string> = {
  'signed char': 'int8', int8_t: 'int8', int8: 'int8', uchar: 'uint8', 'unsigned char': 'uint8', uint8_t: 'uint8', uint8: 'uint8',
  short: 'int16', 'short int': 'int16', 'signed short': 'int16', 'signed short int': 'int16', int16_t: 'int16', int16: 'int16',
  ushort: 'uint16', 'unsigned short': 'uint16', 'unsigned short int': 'uint16', uint16_t: 'uint16', uint16: 'uint16',
  int: 'int32', 'signed int': 'int32', int32_t: 'int32', int32: 'int32', uint: 'uint32', 'unsigned int': 'uint32', uint32_t: 'uint32', uint32: 'uint32',
  float: 'float', double: 'double',
};

function headerEnd(bytes: Uint8Array): { end: number; dataStart: number } {
  const limit = Math.min(bytes.length, 1 << 20);
  for (let i = 0; i < limit - 1; i++) {
    if (bytes[i] === 10 && bytes[i + 1] === 10) return { end: i, dataStart: i + 2 };
    if (bytes[i] === 10 && bytes[i + 1] === 13 && bytes[i + 2] === 10) return { end: i, dataStart: i + 3 };
  }
  throw new InputError('NRRD: no blank line ends the header within the first MiB');
}

/** Parses NRRD bytes (attached data). Throws InputError for anything it cannot trust. */
export async function parseNrrd(bytes: Uint8Array, maxSamples = DEFAULT_MAX_SAMPLES): Promise<Nrrd> {
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
  const type = TYPE_ALIASES[fields.type ?? ''];
  if (!type) throw new InputError(`NRRD type: got "${fields.type}", expected a numeric type (int8 ... double)`);
  const dim = Number(fields.dimension);
  if (!Number.isInteger(dim) || dim < 1 || dim > 16) throw new InputError(`NRRD dimension: got "${fields.dimension}", expected 1 to 16`);
  const sizes = (fields.sizes ?? '').split(/\s+/).filter(Boolean).map(Number);
  if (sizes.length !== dim || sizes.some((s) => !Number.isInteger(s) || s < 1)) {
    throw new InputError(`NRRD sizes: got "${fields.sizes}", expected ${dim} positive whole numbers`);
  }
  const count = sizes.reduce((a, b) => a * b, 1);
  if (count > maxSamples) throw new InputError(`NRRD sizes: ${count} samples exceed the limit of ${maxSamples}`);
  if (fields['data file'] || fields.datafile) throw new InputError('NRRD: detached data files are not read here; save the data attached to the header');
  const encoding = (fields.encoding ?? '').toLowerCase();
  const t = TYPES[type];
  const need = count * t.bytes;
  let raw: Uint8Array;
  if (encoding === 'raw') raw = bytes.subarray(dataStart);
  else if (encoding === 'gzip' || encoding === 'gz') raw = await gunzip(bytes.subarray(dataStart), need);
  else throw new InputError(`NRRD encoding: got "${fields.encoding}", expected raw or gzip`);
  if (raw.length < need) throw new InputError(`NRRD: the header promises ${need} bytes of data, the file holds ${raw.length}`);
  const endian = (fields.endian ?? 'little').toLowerCase();
  if (t.bytes > 1 && endian !== 'little' && endian !== 'big') throw new InputError(`NRRD endian: got "${fields.endian}", expected little or big`);
  const le = endian !== 'big';
  const data = new Float32Array(count);
  if (type === 'float' && le && raw.byteOffset % 4 === 0) {
    data.set(new Float32Array(raw.buffer, raw.byteOffset, count));
  } else {
    const view = new DataView(raw.buffer, raw.byteOffset, need);
    for (let i = 0; i < count; i++) data[i] = t.read(view, i * t.bytes, le);
  }
  return { fields, keys, sizes, data };
}

/** Serializes float32 data with the given fields and key/value pairs (little-endian). */
export async function writeNrrd(
  data: Float32Array, sizes: number[], fields: Record<string, string>, keys: Record<string, string>, compress = false,
): Promise<Uint8Array> {
  const lines = ['NRRD0004', '# Written by Rimfill', 'type: float', `dimension: ${sizes.length}`, `sizes: ${sizes.join(' ')}`, 'endian: little', `encoding: ${compress ? 'gzip' : 'raw'}`];
  for (const [k, v] of Object.entries(fields)) lines.push(`${k}: ${v}`);
  for (const [k, v] of Object.entries(keys)) {
    if (/[\r\n]/.test(v) || k.includes(':=')) throw new Error(`NRRD key ${k}: values must be one line`);
    lines.push(`${k}:=${v}`);
  }
  const head = new TextEncoder().encode(lines.join('\n') + '\n\n');
  let body = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
  if (compress) body = await gzip(body);
  const out = new Uint8Array(head.length + body.length);
  out.set(head);
  out.set(body, head.length);
  return out;
}
