// Collecting the files one input consists of: a folder (a DICOM series, a TIFF stack), or a
// file plus the companions its header names (NRRD "data file", MetaImage ElementDataFile, the
// data file of a .json sidecar, the .json beside a .raw).
import { existsSync, readdirSync, statSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import { InputError } from '../core/errors';
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
    return names.map((n) => ({ name: n, bytes: readBytes(join(path, n), what) }));
  }
  const bytes = readBytes(path, what);
  const files: NamedBytes[] = [{ name: basename(path), bytes }];
  for (const c of companions(path, bytes)) {
    if (basename(c) !== c) throw new InputError(`${what} ${path}: the data file "${c}" must lie in the same folder, named without a path`);
    files.push({ name: c, bytes: readBytes(join(dirname(path), c), `${what} data file`) });
  }
  return files;
}
