// Reading dropped or picked files into a validated scan: the one place the page calls a format
// reader (readScanFile, the same entry point as the CLI).
import { InputError } from '../core/errors';
import type { NamedBytes } from '../core/formats/named-file';
import { readScanFile } from '../core/formats/read-scan';
import { validateGeometry } from '../core/geometry/validate';
import type { Geometry } from '../core/geometry/types';
import type { Scan } from '../core/scan';

/** A file handed over by the page (File is a Blob with a name). */
export interface InputFile {
  name: string;
  arrayBuffer(): Promise<ArrayBuffer>;
}

/** Line integrals below this count as suspicious (noise gives small negatives; common practice). */
const NEGATIVE_LIMIT = -0.05;

const isJson = (f: InputFile) => /\.json$/i.test(f.name);
const isReference = (kind: 'flat' | 'dark') => (f: InputFile) => new RegExp(`^${kind}[^/]*\\.(tiff?|nrrd|mha|raw)$`, 'i').test(f.name.split('/').pop()!);

/**
 * Reads a scan from the files (any format readScanFile knows: NRRD, MetaImage, raw + JSON
 * sidecar, TIFF frames). A .json file beside data that is not raw is a geometry that supplies
 * or replaces the file's; files named flat* and dark* are flat and dark fields for intensity
 * data. Throws InputError naming what is wrong.
 */
export async function readScanFiles(files: InputFile[]): Promise<{ scan: Scan; warnings: string[] }> {
  if (files.length === 0) throw new InputError('import: no file given; expected a scan (NRRD, MetaImage, raw + JSON or TIFF frames)');
  const read = async (f: InputFile): Promise<NamedBytes> => ({ name: f.name, bytes: new Uint8Array(await f.arrayBuffer()) });
  const hasRaw = files.some((f) => /\.raw$/i.test(f.name) && !isReference('flat')(f) && !isReference('dark')(f));
  const geometryFiles = hasRaw ? [] : files.filter(isJson);
  if (geometryFiles.length > 1) throw new InputError(`import: got ${geometryFiles.length} .json files, expected at most one geometry`);
  const flat = files.filter(isReference('flat'));
  const dark = files.filter(isReference('dark'));
  const data = files.filter((f) => !geometryFiles.includes(f) && !flat.includes(f) && !dark.includes(f));
  if (data.length === 0) throw new InputError('import: only geometry or reference files given; expected the projections too');
  let geometry: Geometry | undefined;
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
  let result: Awaited<ReturnType<typeof readScanFile>>;
  try {
    result = await readScanFile(await Promise.all(data.map(read)), {
      geometry,
      flat: flat.length ? await Promise.all(flat.map(read)) : undefined,
      dark: dark.length ? await Promise.all(dark.map(read)) : undefined,
    });
  } catch (err) {
    const names = data.map((f) => f.name).join(', ');
    if (err instanceof InputError && !err.message.includes(data[0].name)) throw err.prefixed(names);
    throw err;
  }
  return { scan: result.scan, warnings: [...result.warnings, ...checkValues(result.scan.data)] };
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
