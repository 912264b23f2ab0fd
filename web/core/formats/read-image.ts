// The one entry point for reading images and volumes (priors, references, phantoms), used by
// the CLI and the page alike: NRRD, MetaImage, raw + JSON sidecar, DICOM CT (one file or a
// series) and TIFF stacks.
import { InputError } from '../errors';
import type { Image2D } from '../image';
import { readDicomSeries } from './dicom';
import { detectFormat } from './detect';
import { volumeFromNrrd } from './image-nrrd';
import type { ReadLimits } from './limits';
import { parseMetaImage } from './metaimage';
import type { NamedBytes } from './named-file';
import { positiveKey } from './projections';
import { readRawWithSidecar } from './raw-json';
import { readTiffStack } from './tiff';
import { checkAnatomicalOrientation, FROM_LPS } from './patient-frame';
import { flipAxes, imageAsMu, volumeSlice, type ImageVolume, type VolumeQuantity } from './volume';

export interface ImageFileOptions extends ReadLimits {
  /** What the values are when the file does not say (TIFF, raw without "quantity"). Default mu. */
  quantity?: 'mu' | 'hu';
  /** Pixel size (mm) for files that carry none (TIFF). Default 1. */
  pixel?: number;
}

export interface ImageReadResult {
  volume: ImageVolume;
  warnings: string[];
}

function quantityOf(text: unknown, field: string): VolumeQuantity {
  if (text === undefined) return 'unknown';
  if (text === 'mu' || text === 'hu') return text;
  throw new InputError(`${field}: got ${JSON.stringify(text)}, expected "mu" or "hu"`);
}

function triple(v: unknown, fallback: [number, number, number], field: string, positive: boolean): [number, number, number] {
  if (v === undefined) return fallback;
  if (!Array.isArray(v) || v.length < 2 || v.length > 3 || v.some((x) => typeof x !== 'number' || !Number.isFinite(x) || (positive && !(x > 0)))) {
    throw new InputError(`${field}: got ${JSON.stringify(v)?.slice(0, 60)}, expected 2 or 3 ${positive ? 'positive ' : ''}numbers in mm`);
  }
  return [v[0], v[1], v[2] ?? fallback[2]];
}

function centred(n: number[], s: number[]): [number, number, number] {
  return [0, 1, 2].map((k) => -(((n[k] ?? 1) - 1) / 2) * s[k]) as [number, number, number];
}

/**
 * The signs of an axis-aligned MetaImage TransformMatrix (row-major NDims x NDims, each axis
 * along the world axis of the same index, +1 or -1); InputError for anything else.
 */
function diagonalSigns(t: number[], nd: number): number[] {
  const signs: number[] = [];
  for (let r = 0; r < nd; r++) {
    for (let c = 0; c < nd; c++) {
      const v = t[r * nd + c];
      const ok = r === c ? Math.abs(Math.abs(v) - 1) <= 1e-6 : Math.abs(v) <= 1e-6;
      if (!ok) throw new InputError(`MetaImage TransformMatrix: got ${t.join(' ')}, expected axis-aligned axes in their own order (1 or -1 on the diagonal; resample rotated images first)`);
    }
    signs.push(Math.sign(t[r * nd + r]));
  }
  return signs;
}

/**
 * A MetaImage as a volume in Rimfill's frame. With an AnatomicalOrientation the coordinates
 * (Offset, TransformMatrix) are in the patient frame LPS, as the MetaIO toolkit writes them, and
 * the letters must agree with the matrix; without one (or "???") they are Rimfill's own.
 */
async function metaImageVolume(files: readonly NamedBytes[], o: ImageFileOptions): Promise<ImageVolume> {
  const m = await parseMetaImage(files, o);
  const nd = m.sizes.length;
  if (nd < 2 || nd > 3) throw new InputError(`MetaImage: got ${nd} dimensions, expected a 2D image or a 3D volume`);
  const signs = diagonalSigns(m.transform, nd);
  const code = m.keys.AnatomicalOrientation;
  const patient = code !== undefined && !/^\?+$/.test(code.trim());
  if (patient) checkAnatomicalOrientation(code, signs);
  const frame = patient ? FROM_LPS : [1, 1, 1];
  const along = [0, 1, 2].map((k) => (signs[k] ?? 1) * frame[k]);
  const fov = m.keys.RimfillFovRadius !== undefined ? Number(m.keys.RimfillFovRadius) : undefined;
  const volume: ImageVolume = {
    nx: m.sizes[0], ny: m.sizes[1], nz: m.sizes[2] ?? 1, data: m.data, format: 'MetaImage',
    spacing: [m.spacing[0], m.spacing[1], m.spacing[2] ?? 1],
    origin: [0, 1, 2].map((k) => (m.offset[k] ?? 0) * frame[k]) as [number, number, number],
    quantity: quantityOf(m.keys.RimfillQuantity, 'MetaImage RimfillQuantity'),
    muWater: positiveKey(m.keys.RimfillMuWater, 'MetaImage RimfillMuWater', 'mu of water in 1/mm'),
    fovRadius: fov !== undefined && fov >= 0 ? fov : undefined,
  };
  return flipAxes(volume, along[0] < 0, along[1] < 0, along[2] < 0);
}

async function readVolume(input: readonly NamedBytes[], o: ImageFileOptions): Promise<ImageReadResult> {
  const { format, files } = detectFormat(input);
  const warnings: string[] = [];
  if (format === 'nrrd') return { volume: await volumeFromNrrd(files, o), warnings };
  if (format === 'dicom') {
    const { volume, paddingPixels, warnings: dicomWarnings } = readDicomSeries(files, o);
    warnings.push(...dicomWarnings);
    if (paddingPixels) warnings.push(`${paddingPixels} DICOM padding pixels (outside the reconstructed field) were set to -1000 HU`);
    return { volume, warnings };
  }
  if (format === 'metaimage') return { volume: await metaImageVolume(files, o), warnings };
  if (format === 'raw-json') {
    const r = readRawWithSidecar(files, o);
    if (r.sizes.length < 2 || r.sizes.length > 3) throw new InputError(`raw image sizes: got ${r.sizes.length} axes, expected [nx, ny] or [nx, ny, nz]`);
    const spacing = triple(r.meta.spacing, [1, 1, 1], 'sidecar spacing', true);
    return {
      volume: {
        nx: r.sizes[0], ny: r.sizes[1], nz: r.sizes[2] ?? 1, data: r.data, format: 'raw + JSON', spacing,
        origin: triple(r.meta.origin, centred(r.sizes, spacing), 'sidecar origin', false),
        quantity: quantityOf(r.meta.quantity, 'sidecar quantity'),
        muWater: r.meta.muWater === undefined ? undefined : positiveKey(String(r.meta.muWater), 'sidecar muWater', 'mu of water in 1/mm'),
      },
      warnings,
    };
  }
  const s = await readTiffStack(files, o);
  const p = o.pixel ?? 1;
  if (!(p > 0)) throw new InputError(`pixel size: got ${p}, expected a positive size in mm`);
  return {
    volume: { nx: s.width, ny: s.height, nz: s.frames, data: s.data, format: 'TIFF', spacing: [p, p, p], origin: centred([s.width, s.height, s.frames], [p, p, p]), quantity: 'unknown' },
    warnings,
  };
}

/** Reads an image or volume from files of any supported format. */
export async function readImageFile(files: readonly NamedBytes[], options: ImageFileOptions = {}): Promise<ImageReadResult> {
  const r = await readVolume(files, options);
  if (r.volume.quantity === 'unknown') r.volume.quantity = options.quantity ?? 'mu';
  return r;
}

/**
 * Reads one slice as a 2D image in mu (1/mm); HU data are converted with mu_water (the file's
 * or the one given). A volume needs `slice` unless it holds one slice.
 */
export async function readImage2D(files: readonly NamedBytes[], options: ImageFileOptions & { slice?: number; muWater?: number } = {}): Promise<{ image: Image2D; warnings: string[] }> {
  const { volume, warnings } = await readImageFile(files, options);
  if (volume.nz > 1 && options.slice === undefined) {
    throw new InputError(`image: the ${volume.format} data hold ${volume.nz} slices`, {
      remedy: { cli: `choose one with --slice (0 to ${volume.nz - 1})`, page: `give the slice to use (0 to ${volume.nz - 1}) beside the file` },
    });
  }
  return { image: imageAsMu(volumeSlice(volume, options.slice ?? 0), options.muWater), warnings };
}
