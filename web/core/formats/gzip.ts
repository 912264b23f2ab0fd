// gzip and zlib (deflate) through the platform's CompressionStream / DecompressionStream
// (browsers and Node >= 18): no decoder of our own, no wasm.
import { InputError } from '../errors';

/** "gzip" (RFC 1952, NRRD) or "deflate" (zlib wrapper, RFC 1950: MetaImage, TIFF, PNG). */
export type CompressionFormat = 'gzip' | 'deflate';

async function pipe(data: Uint8Array, stream: CompressionStream | DecompressionStream, maxBytes: number, what: string): Promise<Uint8Array> {
  const reader = new Blob([data as BlobPart]).stream().pipeThrough(stream).getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.length;
    if (total > maxBytes) {
      await reader.cancel();
      throw new InputError(`${what} data expand beyond ${maxBytes} bytes, more than the header announces`);
    }
    chunks.push(value);
  }
  if (chunks.length === 1) return chunks[0];
  const out = new Uint8Array(total);
  let o = 0;
  for (const c of chunks) {
    out.set(c, o);
    o += c.length;
  }
  return out;
}

/** Inflates compressed data, refusing output larger than maxBytes (a header's promise). */
export async function inflate(data: Uint8Array, format: CompressionFormat, maxBytes: number): Promise<Uint8Array> {
  const what = format === 'gzip' ? 'gzip' : 'zlib';
  try {
    return await pipe(data, new DecompressionStream(format), maxBytes, what);
  } catch (err) {
    if (err instanceof InputError) throw err;
    throw new InputError(`${what} data are damaged or truncated (${err instanceof Error ? err.message : String(err)})`);
  }
}

/** Inflates gzip data, refusing output larger than maxBytes. */
export function gunzip(data: Uint8Array, maxBytes: number): Promise<Uint8Array> {
  return inflate(data, 'gzip', maxBytes);
}

/** Compresses data. */
export function compress(data: Uint8Array, format: CompressionFormat): Promise<Uint8Array> {
  return pipe(data, new CompressionStream(format), Number.MAX_SAFE_INTEGER, format);
}

/** Deflates data to gzip. */
export function gzip(data: Uint8Array): Promise<Uint8Array> {
  return compress(data, 'gzip');
}
