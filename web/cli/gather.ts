// Collecting the files one input consists of: a folder (a DICOM series, a TIFF stack), or a
// file plus the companions its header names (NRRD "data file", MetaImage ElementDataFile, the
// data file of a .json sidecar, the .json beside a .raw).
import { closeSync, existsSync, openSync, readdirSync, readSync, statSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import { InputError } from '../core/errors';
import type { ByteSource } from '../core/formats/byte-source';
import type { NamedBytes } from '../core/formats/named-file';
import { readBytes } from './io';

/** Most files a folder may hold to be read as one input. */
const MAX_FOLDER_FILES = 100_000;

function headerText(bytes: Uint8Array): string {
  return new TextDecoder('latin1').decode(bytes.subarray(0, 1 << 16));
}

/** Names of companion files a header refers to. */
function companions(path: string, bytes: Uint8Array): string[] {
  const text = headerText(bytes);
  const lower = path.toLowerCase();
  if (text.startsWith('NRRD000')) {
    const m = /^data ?file: *(\S+) *$/im.exec(text.split(/\r?\n\r?\n/)[0]);
    return m && m[1] !== 'LIST' ? [m[1]] : [];
  }
  const meta = /^\s*ElementDataFile\s*=\s*(.+?)\s*$/m.exec(text);
  if (meta && /^\s*(ObjectType|NDims)\s*=/m.test(text)) return meta[1] === 'LOCAL' ? [] : [meta[1]];
  if (lower.endsWith('.json')) {
    try {
      const j = JSON.parse(new TextDecoder().decode(bytes)) as { dataFile?: unknown };
      if (typeof j.dataFile === 'string') return [j.dataFile];
    } catch {
      return []; // the reader reports the invalid JSON
    }
    return [basename(path).replace(/\.json$/i, '.raw')];
  }
  if (/\.(raw|bin|dat)$/i.test(lower)) {
    const side = basename(path).replace(/\.[^.]+$/, '.json');
    return existsSync(join(dirname(path), side)) ? [side] : [];
  }
  return [];
}

/** The files of one input: `path` is a file or a folder. `what` names it in messages. */
export function gatherFiles(path: string, what: string): NamedBytes[] {
  return gatherPaths(path, what).map(({ name, path: p, what: w }) => ({ name, bytes: readBytes(p, w) }));
}

/** A file on disk read in pieces (the descriptor stays open until the process ends). */
export function fileSource(name: string, path: string, what: string): ByteSource {
  let size: number;
  try {
    size = statSync(path).size;
  } catch (err) {
    throw new InputError(`${what} ${path}: cannot open (${(err as NodeJS.ErrnoException).code ?? err})`);
  }
  let fd: number | undefined;
  return {
    name, size,
    async read(offset, length) {
      fd ??= openSync(path, 'r');
      const out = new Uint8Array(Math.max(0, Math.min(length, size - offset)));
      let done = 0;
      while (done < out.length) {
        const n = readSync(fd, out, done, out.length - done, offset + done);
        if (n === 0) break;
        done += n;
      }
      if (done < out.length) throw new InputError(`${what} ${path}: the file ended at byte ${offset + done}, ${size} expected`);
      return out;
    },
  };
}

/** The files of one input as sources read in pieces (streamed readers). */
export function gatherSources(path: string, what: string): ByteSource[] {
  return gatherPaths(path, what).map(({ name, path: p, what: w }) => fileSource(name, p, w));
}

/** Names and paths of the files of one input (a folder's files, or a file and its companions). */
function gatherPaths(path: string, what: string): Array<{ name: string; path: string; what: string }> {
  let isDir = false;
  try {
    isDir = statSync(path).isDirectory();
  } catch {
    // readBytes below reports the missing file
  }
  if (isDir) {
    const names = readdirSync(path).filter((n) => !n.startsWith('.')).filter((n) => statSync(join(path, n)).isFile());
    if (names.length === 0) throw new InputError(`${what} ${path}: the folder holds no files`);
    if (names.length > MAX_FOLDER_FILES) throw new InputError(`${what} ${path}: ${names.length} files, more than ${MAX_FOLDER_FILES}`);
    return names.map((n) => ({ name: n, path: join(path, n), what }));
  }
  const head = fileSource(basename(path), path, what);
  const files = [{ name: basename(path), path, what }];
  const bytes = readHead(path, what, head.size);
  for (const c of companions(path, bytes)) {
    if (basename(c) !== c) throw new InputError(`${what} ${path}: the data file "${c}" must lie in the same folder, named without a path`);
    files.push({ name: c, path: join(dirname(path), c), what: `${what} data file` });
  }
  return files;
}

/** The first 64 KiB of a file (headers name their companions there), or the whole of a .json sidecar. */
function readHead(path: string, what: string, size: number): Uint8Array {
  if (path.toLowerCase().endsWith('.json')) return readBytes(path, what);
  const fd = openSync(path, 'r');
  try {
    const out = new Uint8Array(Math.min(size, 1 << 16));
    readSync(fd, out, 0, out.length, 0);
    return out;
  } finally {
    closeSync(fd);
  }
}
