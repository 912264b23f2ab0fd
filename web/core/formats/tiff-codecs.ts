// Decoders for the compressed pieces (strips or tiles) of TIFF images, each bounded by the size
// the piece must have: nothing is written beyond it, and damaged input ends in InputError rather
// than a hang. LZW after TIFF 6.0 (Adobe 1992) section 13, PackBits section 9, the horizontal
// predictor section 14.
import { InputError } from '../errors';

const CLEAR = 256;
const EOI = 257;
const MAX_CODES = 4096;

/**
 * Decodes a TIFF LZW stream (codes of 9 to 12 bits, most significant bit first; Clear 256,
 * end 257; the code width grows one code early, when the next free code is 2^width - 1) into
 * exactly `size` bytes. A stream that ends without the end code is accepted if it filled the
 * piece. Old-style streams (least significant bit first, before TIFF 6.0) are refused.
 */
export function lzwDecode(src: Uint8Array, size: number, what: string): Uint8Array {
  if (src.length >= 2 && src[0] === 0 && (src[1] & 1) === 1) throw new InputError(`${what}: old-style LZW (bits in reverse order, before TIFF 6.0) is not read; save with current LZW or deflate`);
  const out = new Uint8Array(size);
  const prefix = new Int16Array(MAX_CODES), last = new Uint8Array(MAX_CODES), length = new Uint16Array(MAX_CODES);
  for (let c = 0; c < 256; c++) {
    prefix[c] = -1;
    last[c] = c;
    length[c] = 1;
  }
  const totalBits = src.length * 8;
  let bit = 0, width = 9, next = 258, prev = -1, o = 0;
  const byteAt = (i: number): number => (i < src.length ? src[i] : 0);
  const read = (): number => {
    if (bit + width > totalBits) return -1;
    const b = bit >> 3;
    // The code lies within the 24 bits from byte b (width <= 12, offset <= 7).
    const v = (byteAt(b) << 16) | (byteAt(b + 1) << 8) | byteAt(b + 2);
    const code = (v >> (24 - (bit & 7) - width)) & ((1 << width) - 1);
    bit += width;
    return code;
  };
  /** Writes the string of `code` at o (walking its prefixes backward), as much as the piece holds; false once it is full. */
  const emit = (code: number): boolean => {
    const n = length[code];
    for (let c = code, k = o + n - 1; k >= o; k--, c = prefix[c]) if (k < size) out[k] = last[c];
    o = Math.min(o + n, size);
    return o < size;
  };
  for (;;) {
    const code = read();
    if (code < 0 || code === EOI) break;
    if (code === CLEAR) {
      width = 9;
      next = 258;
      prev = -1;
      continue;
    }
    if (prev < 0) {
      if (code > 255) throw new InputError(`${what}: LZW code ${code} where a byte was expected (damaged data)`);
    } else if (code <= next) {
      if (next >= MAX_CODES) throw new InputError(`${what}: LZW table overflows (a Clear code is missing; damaged data)`);
      // The new entry: the previous string plus the first byte of this one (of itself when code = next).
      let first = code === next ? prev : code;
      while (prefix[first] >= 0) first = prefix[first];
      prefix[next] = prev;
      last[next] = last[first];
      length[next] = length[prev] + 1;
      next++;
      if (next === (1 << width) - 1 && width < 12) width++;
    } else {
      throw new InputError(`${what}: LZW code ${code} beyond the table (${next} entries; damaged data)`);
    }
    if (!emit(code)) break; // the piece is full: anything more lies beyond its size
    prev = code;
  }
  if (o < size) throw new InputError(`${what}: LZW data decode to ${o} bytes, ${size} expected`);
  return out;
}

/** Decodes PackBits (a count byte n: n + 1 literal bytes for 0..127, one byte 1 - n times for -127..-1, nothing for -128) into `size` bytes. */
export function packBitsDecode(src: Uint8Array, size: number, what: string): Uint8Array {
  const out = new Uint8Array(size);
  let i = 0, o = 0;
  while (i < src.length && o < size) {
    const n = (src[i++] << 24) >> 24;
    if (n >= 0) {
      if (i + n + 1 > src.length) throw new InputError(`${what}: a PackBits run of ${n + 1} bytes runs past the end of the data`);
      const count = Math.min(n + 1, size - o);
      out.set(src.subarray(i, i + count), o);
      i += n + 1;
      o += count;
    } else if (n !== -128) {
      if (i >= src.length) throw new InputError(`${what}: a PackBits repeat has no byte to repeat`);
      const count = Math.min(1 - n, size - o);
      out.fill(src[i++], o, o + count);
      o += count;
    }
  }
  if (o < size) throw new InputError(`${what}: PackBits data decode to ${o} bytes, ${size} expected`);
  return out;
}

/**
 * Undoes horizontal differencing (predictor 2) in place: in every row of `width` samples of
 * `bytes` bytes (in the file's byte order), each sample is the sum of itself and the one
 * before, modulo 2^(8 bytes).
 */
export function undoHorizontalDifferencing(data: Uint8Array, width: number, rows: number, bytes: number, littleEndian: boolean): void {
  const view = new DataView(data.buffer, data.byteOffset, data.byteLength);
  const rowBytes = width * bytes;
  for (let r = 0; r < rows; r++) {
    const at = r * rowBytes;
    for (let i = 1; i < width; i++) {
      const p = at + i * bytes, q = p - bytes;
      if (bytes === 1) data[p] = (data[p] + data[q]) & 0xff;
      else if (bytes === 2) view.setUint16(p, view.getUint16(p, littleEndian) + view.getUint16(q, littleEndian), littleEndian);
      else view.setUint32(p, view.getUint32(p, littleEndian) + view.getUint32(q, littleEndian), littleEndian);
    }
  }
}
