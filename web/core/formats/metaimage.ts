// MetaImage (ITK MetaIO, https://itk.org/Wiki/ITK/MetaIO/Documentation): a text header of
// "Key = Value" lines ending with ElementDataFile, followed by the data (.mha, LOCAL) or with
// the data in a named file (.mhd + .raw). Zlib-compressed data (CompressedData = True) go
// through the platform. Our own metadata ride along as extra keys (Rimfill...), which MetaIO
// readers keep as unknown fields.
import { InputError } from '../errors';
import { compress, inflate } from './gzip';
import { checkAllocation, checkBytesPresent, sampleCount, type ReadLimits } from './limits';
import { baseName, companion, type NamedBytes } from './named-file';
import { decodeSamples, encodeSamples, SAMPLE_BYTES, type SampleType } from './sample-types';
import type { WrittenType } from './nrrd';

export interface MetaImage {
  /** Header keys as written (case kept). */
  keys: Record<string, string>;
  sizes: number[];
  /** ElementSpacing, mm (1 when absent). */
  spacing: number[];
  /** Offset (position of the first voxel's centre), mm (0 when absent). */
  offset: number[];
  /** TransformMatrix, row-major NDims x NDims (identity when absent). */
  transform: number[];
  data: Float32Array;
}

const ELEMENT_TYPES: Record<string, SampleType> = {
  MET_CHAR: 'int8', MET_UCHAR: 'uint8', MET_SHORT: 'int16', MET_USHORT: 'uint16',
  MET_INT: 'int32', MET_UINT: 'uint32', MET_LONG: 'int32', MET_ULONG: 'uint32', MET_FLOAT: 'float32', MET_DOUBLE: 'float64',
};

const KEY_ALIASES: Record<string, string> = {
  Position: 'Offset', Origin: 'Offset', Rotation: 'TransformMatrix', Orientation: 'TransformMatrix',
  ElementByteOrderMSB: 'BinaryDataByteOrderMSB', ElementSize: 'ElementSpacing',
};

const MAX_HEADER = 1 << 16;

/** Whether the bytes look like a MetaImage header. */
export function looksLikeMetaImage(bytes: Uint8Array): boolean {
  const head = new TextDecoder().decode(bytes.subarray(0, 256));
  return /^\s*(ObjectType|NDims)\s*=/m.test(head);
}

function parseHeader(bytes: Uint8Array): { keys: Record<string, string>; dataStart: number } {
  const keys: Record<string, string> = {};
  let pos = 0;
  const limit = Math.min(bytes.length, MAX_HEADER);
  while (pos < limit) {
    let end = bytes.indexOf(10, pos);
    if (end < 0 || end > limit) end = Math.min(bytes.length, limit);
    const line = new TextDecoder().decode(bytes.subarray(pos, end)).replace(/\r$/, '');
    pos = end + 1;
    if (line.trim() === '') continue;
    const eq = line.indexOf('=');
    if (eq < 0) throw new InputError(`MetaImage: cannot read header line "${line.slice(0, 60)}"`);
    const rawKey = line.slice(0, eq).trim();
    const key = KEY_ALIASES[rawKey] ?? rawKey;
    keys[key] = line.slice(eq + 1).trim();
    if (key === 'ElementDataFile') return { keys, dataStart: Math.min(pos, bytes.length) };
  }
  throw new InputError('MetaImage: no ElementDataFile line ends the header within the first 64 KiB');
}

function numbers(text: string | undefined, n: number, fallback: number[], field: string): number[] {
  if (text === undefined) return fallback;
  const v = text.split(/\s+/).filter(Boolean).map(Number);
  if (v.length !== n || v.some((x) => !Number.isFinite(x))) throw new InputError(`MetaImage ${field}: got "${text.slice(0, 60)}", expected ${n} numbers`);
  return v;
}

function isTrue(text: string | undefined): boolean {
  return text !== undefined && /^(true|1)$/i.test(text);
}

/**
 * Reads a MetaImage: `files[0]` is the header (.mha or .mhd); a detached data file must be
 * among `files`.
 */
export async function parseMetaImage(files: readonly NamedBytes[], limits?: ReadLimits): Promise<MetaImage> {
  const head = files[0];
  const { keys, dataStart } = parseHeader(head.bytes);
  if (keys.ObjectType !== undefined && !/^image$/i.test(keys.ObjectType)) throw new InputError(`MetaImage ObjectType: got "${keys.ObjectType}", expected Image`);
  const nd = Number(keys.NDims);
  if (!Number.isInteger(nd) || nd < 1 || nd > 8) throw new InputError(`MetaImage NDims: got "${keys.NDims}", expected 1 to 8`);
  const sizes = numbers(keys.DimSize, nd, [], 'DimSize');
  if (sizes.length !== nd) throw new InputError('MetaImage: DimSize is missing');
  const count = sampleCount(sizes, 'MetaImage DimSize');
  const type = ELEMENT_TYPES[keys.ElementType ?? ''];
  if (!type) throw new InputError(`MetaImage ElementType: got "${keys.ElementType}", expected one of ${Object.keys(ELEMENT_TYPES).join(', ')}`);
  const channels = Number(keys.ElementNumberOfChannels ?? 1);
  if (channels !== 1) throw new InputError(`MetaImage ElementNumberOfChannels: got "${keys.ElementNumberOfChannels}", expected 1 (one value per voxel)`);
  if (keys.BinaryData !== undefined && !isTrue(keys.BinaryData)) throw new InputError('MetaImage BinaryData: got False, expected binary data (text data are not read)');
  const need = count * SAMPLE_BYTES[type];
  const compressed = isTrue(keys.CompressedData);
  checkAllocation(count * 4 + (compressed ? need : 0), limits, `MetaImage DimSize ${sizes.join(' x ')}`);

  const file = keys.ElementDataFile;
  let src: Uint8Array;
  if (file === 'LOCAL') src = head.bytes.subarray(dataStart);
  else if (file === 'LIST' || /%|\s/.test(file)) throw new InputError(`MetaImage ElementDataFile: got "${file.slice(0, 60)}", expected LOCAL or the name of one data file`);
  else src = companion(files, file, 'MetaImage ElementDataFile').bytes;
  let raw: Uint8Array;
  if (compressed) {
    const size = keys.CompressedDataSize !== undefined ? Number(keys.CompressedDataSize) : src.length;
    if (!Number.isSafeInteger(size) || size < 0) throw new InputError(`MetaImage CompressedDataSize: got "${keys.CompressedDataSize}", expected a byte count`);
    checkBytesPresent(src.length, 0, size, 'MetaImage compressed data');
    raw = await inflate(src.subarray(0, size), 'deflate', need);
    if (raw.length < need) throw new InputError(`MetaImage: DimSize promises ${need} bytes of data, the compressed stream holds ${raw.length}`);
  } else {
    const skipText = keys.HeaderSize ?? '0';
    let skip = Number(skipText);
    if (skip === -1) skip = src.length - need;
    else if (!Number.isSafeInteger(skip) || skip < 0) throw new InputError(`MetaImage HeaderSize: got "${skipText}", expected a whole number >= 0 or -1`);
    checkBytesPresent(src.length, skip, need, 'MetaImage');
    raw = src.subarray(skip, skip + need);
  }
  const data = new Float32Array(count);
  decodeSamples(raw, type, !isTrue(keys.BinaryDataByteOrderMSB), count, data);
  const identity = Array.from({ length: nd * nd }, (_, k) => (k % (nd + 1) === 0 ? 1 : 0));
  const spacing = numbers(keys.ElementSpacing, nd, sizes.map(() => 1), 'ElementSpacing');
  if (spacing.some((s) => !(s > 0))) throw new InputError(`MetaImage ElementSpacing: got "${keys.ElementSpacing}", expected positive spacings`);
  return {
    keys, sizes, data, spacing,
    offset: numbers(keys.Offset, nd, sizes.map(() => 0), 'Offset'),
    transform: numbers(keys.TransformMatrix, nd * nd, identity, 'TransformMatrix'),
  };
}

export interface MetaImageWrite {
  sizes: number[];
  spacing: number[];
  offset: number[];
  /** AnatomicalOrientation letters (the coordinates are then in the patient frame LPS). */
  anatomicalOrientation?: string;
  /** Extra keys (our metadata), one line each. */
  keys?: Record<string, string>;
  type?: WrittenType;
  compress?: boolean;
  /** Write header + data file (.mhd + .raw) under this base name; else one .mha. */
  detachedName?: string;
}

/** Serializes samples as MetaImage; returns one .mha or an .mhd and its .raw. */
export async function writeMetaImage(data: Float32Array, w: MetaImageWrite): Promise<NamedBytes[]> {
  const type = w.type ?? 'float32';
  let body = encodeSamples(data, type).bytes;
  if (w.compress) body = await compress(body, 'deflate');
  const nd = w.sizes.length;
  const lines = [
    'ObjectType = Image', `NDims = ${nd}`, 'BinaryData = True', 'BinaryDataByteOrderMSB = False',
    `CompressedData = ${w.compress ? 'True' : 'False'}`, ...(w.compress ? [`CompressedDataSize = ${body.length}`] : []),
    `TransformMatrix = ${Array.from({ length: nd * nd }, (_, k) => (k % (nd + 1) === 0 ? 1 : 0)).join(' ')}`,
    `Offset = ${w.offset.join(' ')}`, ...(w.anatomicalOrientation ? [`AnatomicalOrientation = ${w.anatomicalOrientation}`] : []), `ElementSpacing = ${w.spacing.join(' ')}`, `DimSize = ${w.sizes.join(' ')}`,
    `ElementType = ${type === 'int16' ? 'MET_SHORT' : 'MET_FLOAT'}`,
  ];
  for (const [k, v] of Object.entries(w.keys ?? {})) {
    if (/[\r\n=]/.test(k) || /[\r\n]/.test(v)) throw new Error(`MetaImage key ${k}: keys and values must be one line`);
    lines.push(`${k} = ${v}`);
  }
  const enc = new TextEncoder();
  if (w.detachedName) {
    const base = baseName(w.detachedName).replace(/\.(mhd|mha|raw|zraw)$/i, '');
    const dataName = `${base}.${w.compress ? 'zraw' : 'raw'}`;
    lines.push(`ElementDataFile = ${dataName}`);
    return [{ name: `${base}.mhd`, bytes: enc.encode(`${lines.join('\n')}\n`) }, { name: dataName, bytes: body }];
  }
  lines.push('ElementDataFile = LOCAL');
  const head = enc.encode(`${lines.join('\n')}\n`);
  const out = new Uint8Array(head.length + body.length);
  out.set(head);
  out.set(body, head.length);
  return [{ name: 'image.mha', bytes: out }];
}
