// Inputs as named byte arrays, so the page (File objects) and Node (fs) hand readers the same
// thing, including multi-file inputs (header + data, a DICOM series, a TIFF stack).
import { InputError } from '../errors';

/** One input file: its name (no folders needed) and its bytes. */
export interface NamedBytes {
  name: string;
  bytes: Uint8Array;
}

/** The last component of a path, either separator. */
export function baseName(name: string): string {
  return name.split(/[\\/]/).pop() ?? name;
}

/** Lower-case extension including compound ones we care about (".nii.gz" is not one). */
export function extension(name: string): string {
  const m = /\.([a-z0-9]+)$/i.exec(baseName(name));
  return m ? m[1].toLowerCase() : '';
}

/** Finds a companion file by name (case-insensitive, folder ignored), or throws naming it. */
export function companion(files: readonly NamedBytes[], wanted: string, what: string): NamedBytes {
  const key = baseName(wanted).toLowerCase();
  const f = files.find((x) => baseName(x.name).toLowerCase() === key);
  if (!f) throw new InputError(`${what}: the data file "${wanted}" was not given (files given: ${files.map((x) => baseName(x.name)).join(', ')})`);
  return f;
}

/** Sorts names the way people number files: "p2" before "p10". */
export function naturalOrder(a: string, b: string): number {
  return a.localeCompare(b, 'en', { numeric: true, sensitivity: 'base' });
}
