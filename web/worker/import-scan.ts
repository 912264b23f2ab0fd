// Reading dropped or picked files into a validated scan: the one place the page calls a format
// reader (the streamed readers, or readScanFile, the same entry points as the CLI).
import { InputError } from '../core/errors';
import type { NamedBytes } from '../core/formats/named-file';
import { bytesSource, type ByteSource } from '../core/formats/byte-source';
import { readScanFile } from '../core/formats/read-scan';
import { openScanStream } from '../core/formats/scan-stream';
import type { Geometry } from '../core/geometry/types';
import { validateGeometry } from '../core/geometry/validate';
import { readWholeScan, scanSource, type ProjectionSource } from '../core/projection-source';
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

/** The files of an import, sorted: a geometry given beside the data, flat and dark frames, the data. */
async function sortFiles(files: InputFile[]): Promise<{ geometry?: Geometry; flat: InputFile[]; dark: InputFile[]; data: InputFile[] }> {
  if (files.length === 0) throw new InputError('import: no file given; expected a scan (NRRD, MetaImage, raw + JSON or TIFF frames)');
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
  return { geometry, flat, dark, data };
}

const read = async (f: InputFile): Promise<NamedBytes> => ({ name: f.name, bytes: new Uint8Array(await f.arrayBuffer()) });

/** A Blob (a File handed to the page) as a source read in pieces. */
function blobSource(blob: Blob, name: string): ByteSource {
  return { name, size: blob.size, read: async (o, n) => new Uint8Array(await blob.slice(o, o + n).arrayBuffer()) };
}

/** A file as a byte source: read in pieces when it is a Blob (a File the page handed over), else whole. */
async function byteSource(f: InputFile): Promise<ByteSource> {
  return typeof Blob !== 'undefined' && f instanceof Blob ? blobSource(f, f.name) : bytesSource(await read(f));
}

/** Prefixes the data files' names to messages that do not name one. */
function named(err: unknown, data: InputFile[]): unknown {
  const names = data.map((f) => f.name).join(', ');
  if (err instanceof InputError && !data.some((f) => err.message.includes(f.name))) return err.prefixed(names);
  return err;
}

/** An import opened for reading: line integrals a chunk of views at a time. */
export interface OpenedScan {
  source: ProjectionSource;
  /** Known before any view is read. */
  warnings: string[];
  /** Known once every view was read (what conversion clamped or filled). */
  lateWarnings: () => string[];
  /** True when the files are read in pieces, false when they were read whole. */
  streamed: boolean;
}

/**
 * Opens dropped or picked files as a scan: streamed (raw NRRD, TIFF frame folders) when the
 * format allows, else read whole (readScanFile, the CLI's entry point). A .json file beside data
 * that is not raw is a geometry that supplies or replaces the file's; files named flat* and
 * dark* are flat and dark fields for intensity data. Throws InputError naming what is wrong.
 */
export async function openScanFiles(files: InputFile[]): Promise<OpenedScan> {
  const { geometry, flat, dark, data } = await sortFiles(files);
  const options = {
    geometry,
    flat: flat.length ? await Promise.all(flat.map(read)) : undefined,
    dark: dark.length ? await Promise.all(dark.map(read)) : undefined,
  };
  try {
    const stream = await openScanStream(await Promise.all(data.map(byteSource)), options);
    if (stream) {
      const source: ProjectionSource = { ...stream.source, read: (v0, v1) => stream.source.read(v0, v1).catch((err) => { throw named(err, data); }) };
      return { source, warnings: [], lateWarnings: stream.warnings, streamed: true };
    }
    const result = await readScanFile(await Promise.all(data.map(read)), options);
    return { source: scanSource(result.scan), warnings: result.warnings, lateWarnings: () => [], streamed: false };
  } catch (err) {
    throw named(err, data);
  }
}

/** Reads a scan whole from the files (openScanFiles, every view read and checked). */
export async function readScanFiles(files: InputFile[]): Promise<{ scan: Scan; warnings: string[] }> {
  const opened = await openScanFiles(files);
  const scan = await readWholeScan(opened.source);
  return { scan, warnings: [...opened.warnings, ...opened.lateWarnings(), ...checkValues(scan.data)] };
}

/** Counts line integrals clearly below zero in a chunk; refuses non-finite values. */
export function negativeCount(data: Float32Array): number {
  let bad = 0, negative = 0;
  for (let i = 0; i < data.length; i++) {
    const v = data[i];
    if (!Number.isFinite(v)) bad++;
    else if (v < NEGATIVE_LIMIT) negative++;
  }
  if (bad) throw new InputError(`scan data: ${bad} of ${data.length} values are not finite numbers (NaN or infinity)`);
  return negative;
}

/** The warning for `negative` of `total` line integrals below the limit (none when 0). */
export function negativeWarning(negative: number, total: number): string[] {
  return negative ? [`${negative} of ${total} line integrals are below ${NEGATIVE_LIMIT} (more than noise would give): check the flat-field correction`] : [];
}

/** Refuses non-finite values; notes clearly negative line integrals. */
export function checkValues(data: Float32Array): string[] {
  return negativeWarning(negativeCount(data), data.length);
}
