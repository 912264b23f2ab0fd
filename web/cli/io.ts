// File access for the CLI: reads with clear errors, writes all-or-nothing (temporary file, then
// rename), so a failed command leaves no half-written output.
import { closeSync, openSync, readFileSync, renameSync, writeFileSync, writeSync, unlinkSync, statSync } from 'node:fs';
import { InputError } from '../core/errors';

/** Largest input file the CLI reads (bytes). */
export const MAX_FILE_BYTES = 4 * 2 ** 30;

export function readBytes(path: string, what: string): Uint8Array {
  let size: number;
  try {
    const st = statSync(path);
    if (!st.isFile()) throw new InputError(`${what} ${path}: not a file`);
    size = st.size;
  } catch (err) {
    if (err instanceof InputError) throw err;
    throw new InputError(`${what} ${path}: cannot open (${(err as NodeJS.ErrnoException).code ?? err})`);
  }
  if (size > MAX_FILE_BYTES) throw new InputError(`${what} ${path}: ${size} bytes is more than the ${MAX_FILE_BYTES}-byte limit`);
  const b = readFileSync(path);
  return new Uint8Array(b.buffer, b.byteOffset, b.byteLength);
}

export function readJson(path: string, what: string): unknown {
  const text = new TextDecoder().decode(readBytes(path, what));
  try {
    return JSON.parse(text);
  } catch (err) {
    throw new InputError(`${what} ${path}: not valid JSON (${(err as Error).message})`);
  }
}

/** Files to write once everything has succeeded. */
export class PendingWrites {
  private readonly files: Array<[string, Uint8Array | string]> = [];
  add(path: string, data: Uint8Array | string): void {
    this.files.push([path, data]);
  }
  /** Writes every file through a temporary name, then renames them all. */
  commit(): void {
    const temps: Array<[string, string]> = [];
    try {
      for (const [path, data] of this.files) {
        const tmp = `${path}.rimfill-${process.pid}.tmp`;
        writeFileSync(tmp, data);
        temps.push([tmp, path]);
      }
    } catch (err) {
      for (const [tmp] of temps) unlinkSync(tmp);
      throw new InputError(`cannot write output: ${(err as Error).message}`);
    }
    for (const [tmp, path] of temps) renameSync(tmp, path);
  }
}

/**
 * A file written in pieces through a temporary name and renamed when complete, so a failed
 * command leaves no half-written output (as PendingWrites does for files made in memory).
 */
export class StreamedFile {
  private readonly tmp: string;
  private fd: number | undefined;

  constructor(readonly path: string) {
    this.tmp = `${path}.rimfill-${process.pid}.tmp`;
    try {
      this.fd = openSync(this.tmp, 'w');
    } catch (err) {
      throw new InputError(`cannot write output: ${(err as Error).message}`);
    }
  }

  write(bytes: Uint8Array): void {
    if (this.fd === undefined) throw new Error(`${this.path}: written after it was closed`);
    let done = 0;
    while (done < bytes.length) done += writeSync(this.fd, bytes, done, bytes.length - done);
  }

  /** Closes the file and gives it its name. */
  commit(): void {
    if (this.fd === undefined) return;
    closeSync(this.fd);
    this.fd = undefined;
    renameSync(this.tmp, this.path);
  }

  /** Closes and deletes the temporary file. */
  discard(): void {
    if (this.fd === undefined) return;
    closeSync(this.fd);
    this.fd = undefined;
    unlinkSync(this.tmp);
  }
}
