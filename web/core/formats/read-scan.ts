// The one entry point for reading projections, used by the CLI and the page alike:
// readScanFile(files, options) accepts NRRD (attached or detached), MetaImage (.mha, .mhd +
// raw), raw + JSON sidecar and TIFF stacks (one page per view, taken as detector intensities
// unless options.quantity says line-integral), attaches the geometry, and turns intensities
// into line integrals with the dark/flat/i0 given.
import { InputError } from '../errors';
import type { ReferenceFrame } from '../preprocess/frames';
import { averageFrames } from '../preprocess/frames';
import type { IntensityCorrection } from '../preprocess/intensity';
import { detectFormat } from './detect';
import type { ReadLimits } from './limits';
import { parseMetaImage } from './metaimage';
import type { NamedBytes } from './named-file';
import { parseGeometryText, positiveKey, projectionAxes, type ProjectionData, type ProjectionQuantity } from './projections';
import { readRawWithSidecar } from './raw-json';
import { assembleScan, type ScanAssemblyOptions, type ScanReadResult } from './scan-assembly';
import { projectionsFromNrrd } from './scan-nrrd';
import { readTiffStack } from './tiff';

/** A dark or flat reference: a level, one frame, or files holding one frame or a stack. */
export type ReferenceInput = ReferenceFrame | NamedBytes[];

export interface ScanFileOptions extends ReadLimits, Omit<ScanAssemblyOptions, 'correction'> {
  dark?: ReferenceInput;
  flat?: ReferenceInput;
  i0?: number;
  /** Bad detector elements: a mask frame (non-zero = bad), given or as files of one frame. */
  badPixels?: Uint8Array | NamedBytes[];
  /** Other corrections (saturation, minimum transmission, beam hardening). */
  correction?: Omit<IntensityCorrection, 'dark' | 'flat' | 'i0' | 'badPixels'>;
}

function quantityOf(text: unknown, field: string): ProjectionQuantity | undefined {
  if (text === undefined) return undefined;
  if (text === 'line-integral' || text === 'intensity') return text;
  throw new InputError(`${field}: got ${JSON.stringify(text)}, expected "line-integral" or "intensity"`);
}

function axes(sizes: readonly number[], what: string): [number, number, number] {
  const a = projectionAxes(sizes, what);
  if (typeof a === 'string') throw new InputError(a);
  return a;
}

/** Reads projection data (any supported format) without geometry or preprocessing. */
export async function readProjectionData(input: readonly NamedBytes[], limits?: ReadLimits): Promise<ProjectionData> {
  const { format, files } = detectFormat(input);
  if (format === 'nrrd') return projectionsFromNrrd(files, limits);
  if (format === 'metaimage') {
    const m = await parseMetaImage(files, limits);
    const [channels, rows, views] = axes(m.sizes, 'MetaImage scan');
    return {
      channels, rows, views, data: m.data, format: 'MetaImage',
      quantity: quantityOf(m.keys.RimfillQuantity, 'MetaImage RimfillQuantity'),
      geometry: parseGeometryText(m.keys.RimfillGeometry, 'MetaImage RimfillGeometry'),
      muWater: positiveKey(m.keys.RimfillMuWater, 'MetaImage RimfillMuWater', 'mu of water in 1/mm'),
    };
  }
  if (format === 'raw-json') {
    const r = readRawWithSidecar(files, limits);
    const [channels, rows, views] = axes(r.sizes, 'raw scan');
    const g = r.meta.geometry ?? (r.meta.kind !== undefined ? r.meta : undefined);
    return {
      channels, rows, views, data: r.data, format: 'raw + JSON', geometry: g,
      quantity: quantityOf(r.meta.quantity, 'sidecar quantity'),
      muWater: r.meta.muWater === undefined ? undefined : positiveKey(String(r.meta.muWater), 'sidecar muWater', 'mu of water in 1/mm'),
      i0: r.meta.i0 === undefined ? undefined : positiveKey(String(r.meta.i0), 'sidecar i0', 'the unattenuated intensity'),
    };
  }
  if (format === 'tiff') {
    const s = await readTiffStack(files, limits);
    // TIFF frames come from detectors: intensities unless the caller says otherwise.
    return { channels: s.width, rows: s.height, views: s.frames, data: s.data, format: 'TIFF', quantity: 'intensity' };
  }
  throw new InputError('DICOM files hold images, not projections; use them as an image (prior, reference or phantom)');
}

async function reference(r: ReferenceInput | undefined, frameSize: number, what: string, limits?: ReadLimits): Promise<ReferenceFrame | undefined> {
  if (r === undefined || typeof r === 'number' || r instanceof Float32Array) return r;
  const p = await readProjectionData(r, limits);
  if (p.channels * p.rows !== frameSize) throw new InputError(`${what}: frames of ${p.channels} x ${p.rows}, expected the scan's ${frameSize} elements per frame`);
  return averageFrames(p.data, frameSize, what);
}

async function mask(m: Uint8Array | NamedBytes[] | undefined, frameSize: number, limits?: ReadLimits): Promise<Uint8Array | undefined> {
  if (m === undefined || m instanceof Uint8Array) return m;
  const p = await readProjectionData(m, limits);
  if (p.data.length !== frameSize) throw new InputError(`bad-pixel mask: ${p.channels} x ${p.rows} x ${p.views} values, expected one frame of ${frameSize} elements (rows x channels)`);
  return Uint8Array.from(p.data, (v) => (v !== 0 ? 1 : 0));
}

/** The corrections of `options` with reference frames and masks read (frames of `frameSize` elements). */
export async function resolveCorrections(options: ScanFileOptions, frameSize: number): Promise<IntensityCorrection> {
  const dark = await reference(options.dark, frameSize, 'dark frame', options);
  const flat = await reference(options.flat, frameSize, 'flat frame', options);
  const badPixels = await mask(options.badPixels, frameSize, options);
  return { ...options.correction, dark, flat, i0: options.i0, badPixels };
}

/** Reads a scan from files of any supported format. */
export async function readScanFile(files: readonly NamedBytes[], options: ScanFileOptions = {}): Promise<ScanReadResult> {
  const p = await readProjectionData(files, options);
  const correction = await resolveCorrections(options, p.channels * p.rows);
  return assembleScan(p, { ...options, correction });
}
