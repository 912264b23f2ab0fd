// Reading dropped or picked files into a validated scan: the one place the page calls a format
// reader, so a reader for more formats swaps in here.
import { InputError } from '../core/errors';
import { readScanNrrd } from '../core/formats/scan-nrrd';
import { validateGeometry } from '../core/geometry/validate';
import type { Scan } from '../core/scan';

/** A file handed over by the page (File is a Blob with a name). */
export interface InputFile {
  name: string;
  arrayBuffer(): Promise<ArrayBuffer>;
}

/** Line integrals below this count as suspicious (noise gives small negatives; common practice). */
const NEGATIVE_LIMIT = -0.05;

/**
 * Reads a scan from the files: a .nrrd scan file, optionally with a .json geometry that
 * supplies or replaces the one in the file. Throws InputError naming what is wrong.
 */
export async function readScanFiles(files: InputFile[]): Promise<{ scan: Scan; warnings: string[] }> {
  if (files.length === 0) throw new InputError('import: no file given; expected a .nrrd scan file');
  const scanFiles = files.filter((f) => /\.nrrd$/i.test(f.name));
  const geometryFiles = files.filter((f) => /\.json$/i.test(f.name));
  const other = files.filter((f) => !scanFiles.includes(f) && !geometryFiles.includes(f));
  if (other.length) throw new InputError(`import ${other[0].name}: not a file this page reads; expected a .nrrd scan file and optionally a .json geometry`);
  if (scanFiles.length !== 1) throw new InputError(`import: got ${scanFiles.length} .nrrd files, expected exactly one scan file`);
  if (geometryFiles.length > 1) throw new InputError(`import: got ${geometryFiles.length} .json files, expected at most one geometry`);
  let geometry;
  if (geometryFiles.length) {
    const f = geometryFiles[0];
    let parsed: unknown;
    try {
      parsed = JSON.parse(new TextDecoder().decode(await f.arrayBuffer()));
    } catch {
      throw new InputError(`import ${f.name}: not valid JSON`);
    }
    geometry = validateGeometry(parsed);
  }
  const f = scanFiles[0];
  let scan: Scan;
  try {
    scan = await readScanNrrd(new Uint8Array(await f.arrayBuffer()), geometry);
  } catch (err) {
    if (err instanceof InputError) throw new InputError(`${f.name}: ${err.message}`);
    throw err;
  }
  return { scan, warnings: checkValues(scan.data) };
}

/** Refuses non-finite values; notes clearly negative line integrals. */
export function checkValues(data: Float32Array): string[] {
  let bad = 0, negative = 0;
  for (let i = 0; i < data.length; i++) {
    const v = data[i];
    if (!Number.isFinite(v)) bad++;
    else if (v < NEGATIVE_LIMIT) negative++;
  }
  if (bad) throw new InputError(`scan data: ${bad} of ${data.length} values are not finite numbers (NaN or infinity)`);
  return negative ? [`${negative} of ${data.length} line integrals are below ${NEGATIVE_LIMIT} (more than noise would give): check the flat-field correction`] : [];
}
