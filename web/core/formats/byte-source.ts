// A file read in pieces: a page's File (Blob.slice, worker/import-scan.ts), a file on disk (the
// CLI), or bytes already in memory. Streamed readers take these so that a large scan is never copied whole.
import type { NamedBytes } from './named-file';

export interface ByteSource {
  readonly name: string;
  /** Bytes in the file. */
  readonly size: number;
  /** Bytes [offset, offset + length) (fewer at the end of the file). */
  read(offset: number, length: number): Promise<Uint8Array>;
}

/** Bytes in memory as a source. */
export function bytesSource(f: NamedBytes): ByteSource {
  return { name: f.name, size: f.bytes.length, read: async (o, n) => f.bytes.subarray(o, Math.min(f.bytes.length, o + n)) };
}

/** The whole file in memory (for readers that cannot stream). */
export async function readWhole(src: ByteSource): Promise<NamedBytes> {
  return { name: src.name, bytes: await src.read(0, src.size) };
}
