// Numeric sample types shared by the NRRD, MetaImage and raw readers and writers, and the one
// conversion from file bytes to float32 (the only copy a reader makes of the data).
import { InputError } from '../errors';

export type SampleType = 'int8' | 'uint8' | 'int16' | 'uint16' | 'int32' | 'uint32' | 'float32' | 'float64';

export const SAMPLE_BYTES: Record<SampleType, number> = {
  int8: 1, uint8: 1, int16: 2, uint16: 2, int32: 4, uint32: 4, float32: 4, float64: 8,
};

type ArrayCtor = new (buffer: ArrayBufferLike, byteOffset: number, length: number) => ArrayLike<number>;
const VIEWS: Record<SampleType, ArrayCtor> = {
  int8: Int8Array, uint8: Uint8Array, int16: Int16Array, uint16: Uint16Array,
  int32: Int32Array, uint32: Uint32Array, float32: Float32Array, float64: Float64Array,
};

const GETTERS: Record<SampleType, (v: DataView, o: number, le: boolean) => number> = {
  int8: (v, o) => v.getInt8(o),
  uint8: (v, o) => v.getUint8(o),
  int16: (v, o, le) => v.getInt16(o, le),
  uint16: (v, o, le) => v.getUint16(o, le),
  int32: (v, o, le) => v.getInt32(o, le),
  uint32: (v, o, le) => v.getUint32(o, le),
  float32: (v, o, le) => v.getFloat32(o, le),
  float64: (v, o, le) => v.getFloat64(o, le),
};

const HOST_LITTLE_ENDIAN = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/** Parses a sample type name as written in our JSON sidecars ("float32", "int16", ...). */
export function sampleType(name: unknown, field: string): SampleType {
  if (typeof name === 'string' && name in SAMPLE_BYTES) return name as SampleType;
  throw new InputError(`${field}: got ${JSON.stringify(name)}, expected one of ${Object.keys(SAMPLE_BYTES).join(', ')}`);
}

/**
 * Converts `count` samples of `type` starting at src[0] into out[outOffset...] as float32.
 * Uses a typed-array view (native speed) when byte order and alignment allow, a DataView
 * otherwise; either way the data are read once and written once.
 */
export function decodeSamples(src: Uint8Array, type: SampleType, littleEndian: boolean, count: number, out: Float32Array, outOffset = 0): void {
  const size = SAMPLE_BYTES[type];
  if (src.length < count * size) throw new InputError(`data: ${count} samples of ${type} need ${count * size} bytes, ${src.length} present`);
  const native = size === 1 || littleEndian === HOST_LITTLE_ENDIAN;
  if (native && type === 'float32') {
    // Same type and byte order: a byte copy into the output, aligned or not.
    new Uint8Array(out.buffer, out.byteOffset + outOffset * 4, count * 4).set(src.subarray(0, count * 4));
    return;
  }
  if (native && src.byteOffset % size === 0) {
    out.set(new VIEWS[type](src.buffer, src.byteOffset, count), outOffset);
    return;
  }
  const view = new DataView(src.buffer, src.byteOffset, count * size);
  const get = GETTERS[type];
  for (let i = 0; i < count; i++) out[outOffset + i] = get(view, i * size, littleEndian);
}

/** Encodes float32 samples as `type` (little-endian); integers are rounded and clamped. */
export function encodeSamples(data: Float32Array, type: 'float32' | 'int16'): { bytes: Uint8Array; clamped: number } {
  if (type === 'float32') {
    if (HOST_LITTLE_ENDIAN) return { bytes: new Uint8Array(data.buffer, data.byteOffset, data.byteLength), clamped: 0 };
  }
  const out = new Uint8Array(data.length * SAMPLE_BYTES[type]);
  const view = new DataView(out.buffer);
  let clamped = 0;
  for (let i = 0; i < data.length; i++) {
    if (type === 'float32') view.setFloat32(i * 4, data[i], true);
    else {
      const v = Math.round(data[i]);
      const c = v > 32767 ? 32767 : v < -32768 ? -32768 : Number.isNaN(v) ? 0 : v;
      if (c !== v) clamped++;
      view.setInt16(i * 2, c, true);
    }
  }
  return { bytes: out, clamped };
}
