// Raw samples with a JSON sidecar (README, "Inputs": the second scan form): the JSON gives "dtype",
// "sizes" (fastest axis first), optional "endian" (little), "byteOffset" (0) and "dataFile"
// (default: the other file given, or the JSON's name with .raw), plus the scan geometry (at
// the top level or under "geometry"), "quantity" and "muWater"; images give "spacing",
// "origin" and "quantity" (mu | hu).
import { InputError } from '../errors';
import { checkAllocation, checkBytesPresent, sampleCount, type ReadLimits } from './limits';
import { baseName, companion, extension, type NamedBytes } from './named-file';
import { decodeSamples, SAMPLE_BYTES, sampleType } from './sample-types';

export interface RawWithSidecar {
  /** The parsed sidecar. */
  meta: Record<string, unknown>;
  sizes: number[];
  data: Float32Array;
}

const MAX_SIDECAR = 64 << 20;

/** The JSON sidecar among the files, if any. */
export function findSidecar(files: readonly NamedBytes[]): NamedBytes | undefined {
  return files.find((f) => extension(f.name) === 'json');
}

/** Reads raw data described by a JSON sidecar; both must be among `files`. */
export function readRawWithSidecar(files: readonly NamedBytes[], limits?: ReadLimits): RawWithSidecar {
  const side = findSidecar(files);
  if (!side) throw new InputError('raw data: no .json sidecar given (it names dtype and sizes)');
  if (side.bytes.length > MAX_SIDECAR) throw new InputError(`${baseName(side.name)}: ${side.bytes.length} bytes is too large for a JSON sidecar`);
  let meta: unknown;
  try {
    meta = JSON.parse(new TextDecoder().decode(side.bytes));
  } catch (err) {
    throw new InputError(`${baseName(side.name)}: not valid JSON (${(err as Error).message})`);
  }
  if (typeof meta !== 'object' || meta === null || Array.isArray(meta)) throw new InputError(`${baseName(side.name)}: expected a JSON object with dtype and sizes`);
  const m = meta as Record<string, unknown>;
  const type = sampleType(m.dtype, `${baseName(side.name)} dtype`);
  const sizes = m.sizes;
  if (!Array.isArray(sizes) || sizes.length < 1 || sizes.length > 4 || sizes.some((s) => !Number.isSafeInteger(s) || (s as number) < 1)) {
    throw new InputError(`${baseName(side.name)} sizes: got ${JSON.stringify(sizes)?.slice(0, 60)}, expected 1 to 4 positive whole numbers, fastest axis first`);
  }
  const count = sampleCount(sizes as number[], `${baseName(side.name)} sizes`);
  const endian = m.endian ?? 'little';
  if (endian !== 'little' && endian !== 'big') throw new InputError(`${baseName(side.name)} endian: got ${JSON.stringify(endian)}, expected "little" or "big"`);
  const offset = m.byteOffset ?? 0;
  if (!Number.isSafeInteger(offset) || (offset as number) < 0) throw new InputError(`${baseName(side.name)} byteOffset: got ${JSON.stringify(offset)}, expected a whole number >= 0`);
  let data: NamedBytes;
  if (m.dataFile !== undefined) {
    if (typeof m.dataFile !== 'string') throw new InputError(`${baseName(side.name)} dataFile: expected a file name`);
    data = companion(files, m.dataFile, `${baseName(side.name)} dataFile`);
  } else {
    const others = files.filter((f) => f !== side);
    if (others.length === 1) data = others[0];
    else data = companion(files, baseName(side.name).replace(/\.json$/i, '.raw'), baseName(side.name));
  }
  const need = count * SAMPLE_BYTES[type];
  checkBytesPresent(data.bytes.length, offset as number, need, `${baseName(data.name)} (${count} samples of ${type})`);
  checkAllocation(count * 4, limits, `${baseName(side.name)} sizes ${(sizes as number[]).join(' x ')}`);
  const out = new Float32Array(count);
  decodeSamples(data.bytes.subarray(offset as number, (offset as number) + need), type, endian === 'little', count, out);
  return { meta: m, sizes: sizes as number[], data: out };
}
