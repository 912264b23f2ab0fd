// Reading the CLI's inputs through the one entry point per kind (web/core/formats/read-scan.ts,
// read-image.ts): scans in any supported format with an optional geometry side file or preset,
// dark/flat frames or i0, and mu_water; images (NRRD, MetaImage, raw + JSON, DICOM, TIFF).
import { InputError } from '../core/errors';
import { presetGeometry, PRESET_NAMES } from '../core/geometry/presets';
import type { Geometry } from '../core/geometry/types';
import { validateGeometry } from '../core/geometry/validate';
import { readImage2D, readImageFile } from '../core/formats/read-image';
import { readScanFile, type ScanFileOptions } from '../core/formats/read-scan';
import { openScanStream } from '../core/formats/scan-stream';
import { viewCount } from '../core/geometry/types';
import { readWholeScan, scanSource, type ProjectionSource } from '../core/projection-source';
import { checkReduction, isIdentity, reduceSource, type Reduction } from '../core/reduction';
import type { ScanReadResult } from '../core/formats/scan-assembly';
import { asMuVolume, imageAsMu, volumeSlice } from '../core/formats/volume';
import type { Image2D } from '../core/image';
import { checkMuWater } from '../core/preprocess/hu-calibration';
import type { Scan } from '../core/scan';
import type { OptionType, ParsedArgs } from './args';
import { gatherFiles, gatherSources } from './gather';
import { readJson } from './io';

/** Options every command that reads a scan accepts (README, "Command line"). */
export const SCAN_INPUT_OPTIONS: Record<string, OptionType> = {
  geometry: 'string', flat: 'string', dark: 'string', i0: 'number', 'mu-water': 'number', 'memory-limit': 'number', 'line-integrals': 'flag',
  saturation: 'number', 'bad-pixels': 'string', 'water-polynomial': 'string',
  bin: 'int', 'view-step': 'int', rows: 'string',
};

export const SCAN_INPUT_HELP = `    [--geometry geom.json] [--flat F] [--dark F] [--i0 N] [--mu-water X] [--memory-limit MB]
    [--line-integrals] [--saturation N] [--bad-pixels mask] [--water-polynomial c1,c2,...]
    [--bin 2|4] [--view-step K] [--rows FIRST:END]
    (TIFF frames are intensities unless --line-integrals; the mask is one frame, non-zero = bad;
    the polynomial maps each line integral p to c1 p + c2 p^2 + ...; --bin averages 2 x 2 or
    4 x 4 detector cells, --view-step keeps every K-th view, --rows keeps rows FIRST to END - 1;
    --memory-limit also bounds the run: the CLI refuses, before any work, a run it estimates
    above the limit and names the binning that fits)`;
import type { Volume } from '../core/volume';

/** A geometry from a preset name or a JSON file. */
export function loadGeometry(nameOrPath: string): Geometry {
  const preset = presetGeometry(nameOrPath);
  if (preset) return preset;
  if (!nameOrPath.toLowerCase().endsWith('.json')) {
    throw new InputError(`geometry: got "${nameOrPath}", expected a .json file or one of ${PRESET_NAMES.join(', ')}`);
  }
  return validateGeometry(readJson(nameOrPath, 'geometry'));
}

/** The --memory-limit option in bytes, when given. */
export function memoryLimit(a?: ParsedArgs): number | undefined {
  const mb = a?.options['memory-limit'];
  if (mb === undefined) return undefined;
  if (typeof mb !== 'number' || !(mb > 0)) throw new InputError(`option --memory-limit: got ${mb}, expected megabytes (> 0)`);
  return mb * 2 ** 20;
}

function polynomial(text: string | undefined): number[] | undefined {
  if (text === undefined) return undefined;
  const c = text.split(',').map(Number);
  if (text.trim() === '' || c.some((x) => !Number.isFinite(x))) throw new InputError(`option --water-polynomial: got "${text}", expected coefficients c1,c2,... separated by commas`);
  return c;
}

/** The reduction the options ask for (--bin, --view-step, --rows), checked against `g`. */
export function reductionOf(a: ParsedArgs | undefined, g: Geometry): Reduction {
  const o = a?.options ?? {};
  const raw: Record<string, unknown> = {};
  if (o.bin !== undefined) raw.bin = o.bin;
  if (o['view-step'] !== undefined) raw.viewStep = o['view-step'];
  if (o.rows !== undefined) {
    const m = /^\s*(\d+)\s*:\s*(\d+)\s*$/.exec(String(o.rows));
    if (!m) throw new InputError(`option --rows: got "${o.rows}", expected FIRST:END (detector rows FIRST to END - 1)`);
    raw.rows = [Number(m[1]), Number(m[2])];
  }
  try {
    return checkReduction(raw, g, 'reduction');
  } catch (err) {
    if (!(err instanceof InputError)) throw err;
    const names: Record<string, string> = { bin: 'bin', viewStep: 'view-step', rows: 'rows' };
    const m = /^reduction\.(\w+): (.*)$/s.exec(err.message);
    throw m ? new InputError(`option --${names[m[1]] ?? m[1]}: ${m[2]}`) : err;
  }
}

/** A scan input opened for reading a chunk of views at a time (streamed when the format allows). */
export interface ScanInput {
  /** Line integrals, reduced as the options ask. */
  source: ProjectionSource;
  reduction: Reduction;
  /** The data's size before reduction. */
  from: { channels: number; rows: number; views: number };
  /** What reading noticed (complete once every view was read). */
  warnings: () => string[];
  streamed: boolean;
}

/** Opens a scan (file or folder) with the scan-input options of `a`; streams raw NRRD and TIFF frame folders. */
export async function openScanInput(path: string, a?: ParsedArgs): Promise<ScanInput> {
  const options = await scanFileOptions(a);
  const stream = await openScanStream(gatherSources(path, 'scan'), options);
  let source: ProjectionSource, warnings: () => string[];
  if (stream) {
    source = stream.source;
    warnings = stream.warnings;
  } else {
    const r = await readScanFile(gatherFiles(path, 'scan'), options);
    source = scanSource(r.scan);
    warnings = () => r.warnings;
  }
  const g = source.geometry;
  const reduction = reductionOf(a, g);
  return {
    source: reduceSource(source, reduction), reduction, warnings, streamed: !!stream,
    from: { channels: g.detector.channels, rows: g.detector.rows, views: viewCount(g) },
  };
}

/** Reads a scan (file or folder) with the scan-input options of `a`, reporting what preprocessing did. */
export async function loadScanWithReport(path: string, a?: ParsedArgs): Promise<ScanReadResult> {
  const r = await readScanFile(gatherFiles(path, 'scan'), await scanFileOptions(a));
  const reduction = reductionOf(a, r.scan.geometry);
  if (isIdentity(reduction)) return r;
  return { ...r, scan: await readWholeScan(reduceSource(scanSource(r.scan), reduction)) };
}

/** The reader options the scan-input options of `a` give. */
async function scanFileOptions(a?: ParsedArgs): Promise<ScanFileOptions> {
  const o = a?.options ?? {};
  const str = (k: string) => (typeof o[k] === 'string' ? (o[k] as string) : undefined);
  const num = (k: string) => (typeof o[k] === 'number' ? (o[k] as number) : undefined);
  const level = (k: 'flat' | 'dark') => {
    const v = str(k);
    if (v === undefined) return undefined;
    const n = Number(v);
    return v.trim() !== '' && Number.isFinite(n) ? n : gatherFiles(v, `${k} frame`);
  };
  const i0 = num('i0');
  if (i0 !== undefined && !(i0 > 0)) throw new InputError(`option --i0: got ${i0}, expected the positive reading of the unattenuated beam`);
  const mw = num('mu-water');
  return {
    geometry: str('geometry') ? loadGeometry(str('geometry')!) : undefined,
    flat: level('flat'), dark: level('dark'), i0,
    quantity: o['line-integrals'] ? 'line-integral' : undefined,
    badPixels: str('bad-pixels') ? gatherFiles(str('bad-pixels')!, 'bad-pixel mask') : undefined,
    correction: { saturation: num('saturation'), waterPolynomial: polynomial(str('water-polynomial')) },
    muWater: mw === undefined ? undefined : checkMuWater(mw, 'option --mu-water'),
    maxBytes: memoryLimit(a),
  };
}

/** Reads a scan; `geometryPath` supplies or replaces its geometry (kept for callers that pass only that). */
export async function loadScan(path: string, geometryOrArgs?: string | ParsedArgs): Promise<Scan> {
  const a: ParsedArgs | undefined = typeof geometryOrArgs === 'string' ? { positional: [], options: { geometry: geometryOrArgs } } : geometryOrArgs;
  return (await loadScanWithReport(path, a)).scan;
}

/** Reads an image (file or folder) as mu; HU data need mu_water (the file's or given). */
export async function loadImage(path: string, what = 'image', muWater?: number, slice?: number): Promise<Image2D> {
  const { image } = await readImage2D(gatherFiles(path, what), { muWater, slice });
  return image;
}

/**
 * Reads a volume (file or folder: NRRD, MetaImage, raw + JSON, DICOM series, TIFF stack) as mu;
 * HU data need mu_water (the file's or given). Warnings: what the reader noticed.
 */
export async function loadVolume(path: string, what = 'volume', muWater?: number, a?: ParsedArgs): Promise<{ volume: Volume; warnings: string[] }> {
  const { volume, warnings } = await readImageFile(gatherFiles(path, what), { maxBytes: memoryLimit(a) });
  return { volume: asMuVolume(volume, muWater), warnings };
}

/**
 * Reads an image or a volume (file or folder) as mu: a volume when the data hold more than one
 * slice, else an image. HU data need mu_water (the file's or given).
 */
export async function loadImageOrVolume(path: string, what: string, muWater?: number): Promise<{ image?: Image2D; volume?: Volume; warnings: string[] }> {
  const { volume, warnings } = await readImageFile(gatherFiles(path, what));
  if (volume.nz > 1) return { volume: asMuVolume(volume, muWater), warnings };
  return { image: imageAsMu(volumeSlice(volume, 0), muWater), warnings };
}
