// File access for the CLI: reads with clear errors, writes all-or-nothing (temporary file, then
// rename), so a failed command leaves no half-written output.
import { accessSync, closeSync, constants, existsSync, fstatSync, openSync, type Stats, readFileSync, renameSync, writeFileSync, writeSync, unlinkSync, statSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
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

/** An output a command will write: the option that names it and its path (undefined: not asked for). */
export type OutputPath = [option: string, path: string | undefined];

/**
 * Checks, before any work is done, that every output can be written: its folder exists and is
 * writable, the path is not a folder, and no two outputs share a path. A typo in an output path
 * then costs a second, not a whole reconstruction. Returns the outputs that exist already (they
 * will be replaced).
 */
export function checkOutputs(outputs: OutputPath[]): string[] {
  const seen = new Map<string, string>();
  const existing: string[] = [];
  for (const [option, path] of outputs) {
    if (path === undefined) continue;
    const where = `option --${option}`;
    if (path.trim() === '') throw new InputError(`${where}: got an empty path, expected a file name`);
    const full = resolve(path);
    const other = seen.get(full);
    if (other) throw new InputError(`options --${other} and --${option} both name ${path}; give each output its own file`);
    seen.set(full, option);
    const folder = dirname(full);
    let st: Stats;
    try {
      st = statSync(folder);
    } catch {
      throw new InputError(`${where}: the folder ${dirname(path)} does not exist; create it first or choose another`);
    }
    if (!st.isDirectory()) throw new InputError(`${where}: ${dirname(path)} is not a folder`);
    try {
      accessSync(folder, constants.W_OK);
    } catch {
      throw new InputError(`${where}: the folder ${dirname(path)} cannot be written to (permission denied)`);
    }
    if (existsSync(full)) {
      if (statSync(full).isDirectory()) throw new InputError(`${where}: ${path} is a folder; give a file name inside it`);
      existing.push(path);
    }
  }
  return existing;
}

/** A file written by PendingWrites.commit. */
export interface WrittenFile {
  path: string;
  bytes: number;
  /** An existing file of that name was replaced. */
  replaced: boolean;
}

/** Files to write once everything has succeeded. */
export class PendingWrites {
  private readonly files: Array<[string, Uint8Array | string]> = [];
  add(path: string, data: Uint8Array | string): void {
    this.files.push([path, data]);
  }
  /** Bytes waiting to be written. */
  get bytes(): number {
    return this.files.reduce((n, [, d]) => n + (typeof d === 'string' ? Buffer.byteLength(d) : d.byteLength), 0);
  }
  /** Writes every file through a temporary name, then renames them all. */
  commit(): WrittenFile[] {
    const written = this.files.map(([path, data]) => ({
      path, bytes: typeof data === 'string' ? Buffer.byteLength(data) : data.byteLength, replaced: existsSync(path),
    }));
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
    return written;
  }
}

/** Warnings naming the files that replaced existing ones. */
export function replacedWarnings(written: WrittenFile[]): string[] {
  return written.filter((w) => w.replaced).map((w) => `replaced the existing file ${w.path}`);
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
  commit(): WrittenFile[] {
    if (this.fd === undefined) throw new Error(`${this.path}: committed twice`);
    const bytes = fstatSync(this.fd).size;
    closeSync(this.fd);
    this.fd = undefined;
    const replaced = existsSync(this.path);
    renameSync(this.tmp, this.path);
    return [{ path: this.path, bytes, replaced }];
  }

  /** Closes and deletes the temporary file. */
  discard(): void {
    if (this.fd === undefined) return;
    closeSync(this.fd);
    this.fd = undefined;
    unlinkSync(this.tmp);
  }
}
