// gzip through the platform's CompressionStream / DecompressionStream (browsers and Node >= 18).
import { InputError } from '../errors';

async function pipe(data: Uint8Array, stream: CompressionStream | DecompressionStream, maxBytes: number): Promise<Uint8Array> {
  const reader = new Blob([data as BlobPart]).stream().pipeThrough(stream).getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.length;
    if (total > maxBytes) {
      await reader.cancel();
      throw new InputError(`gzip data expands beyond ${maxBytes} bytes, more than the header announces`);
    }
    chunks.push(value);
  }
  const out = new Uint8Array(total);
  let o = 0;
  for (const c of chunks) {
    out.set(c, o);
    o += c.length;
  }
  return out;
}

/** Inflates gzip data, refusing output larger than maxBytes (a header's promise). */
export async function gunzip(data: Uint8Array, maxBytes: number): Promise<Uint8Array> {
  try {
    return await pipe(data, new DecompressionStream('gzip'), maxBytes);
  } catch (err) {
    if (err instanceof InputError) throw err;
    throw new InputError(`gzip data is damaged or truncated (${err instanceof Error ? err.message : String(err)})`);
  }
}

/** Deflates data to gzip. */
export function gzip(data: Uint8Array): Promise<Uint8Array> {
  return pipe(data, new CompressionStream('gzip'), Number.MAX_SAFE_INTEGER);
}
