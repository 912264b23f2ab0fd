// Images and volumes as read from files: a 3D grid (one slice for 2D images) in mm, values in
// 1/mm (mu), HU, or as stored when the file does not say.
import { InputError, type Remedy } from '../errors';
import { checkGrid, huToMu, type Image2D } from '../image';
import { checkVolumeGrid, type Volume } from '../volume';

/** How to give mu_water for HU data. */
export const MU_WATER_REMEDY: Remedy = {
  cli: 'give it with --mu-water',
  page: "set the scan's mu of water first (HU calibration, in the Images tab)",
};

export type VolumeQuantity = 'mu' | 'hu' | 'unknown';

/**
 * Patient, study and frame-of-reference attributes a DICOM input carried (DICOM keywords to
 * values as read), kept so that a DICOM export of it stays with the same patient and study.
 */
export type DicomContext = Partial<Record<'PatientName' | 'PatientID' | 'PatientBirthDate' | 'PatientSex' | 'PatientAge' | 'StudyInstanceUID' | 'StudyDate'
  | 'StudyTime' | 'StudyID' | 'AccessionNumber' | 'ReferringPhysicianName' | 'PatientPosition' | 'FrameOfReferenceUID', string>>;

/** A volume, x fastest then y then z (slice after slice). */
export interface ImageVolume {
  nx: number;
  ny: number;
  nz: number;
  /** Voxel size along x, y, z, mm. */
  spacing: [number, number, number];
  /** Centre of voxel (0, 0, 0), mm. */
  origin: [number, number, number];
  data: Float32Array;
  quantity: VolumeQuantity;
  muWater?: number;
  fovRadius?: number;
  /** What made it, in words (rimfill.description), when known. */
  description?: string;
  /** Half height of the measured region on the axis, mm (cone-beam reconstructions). */
  fovHalfHeight?: number;
  /** The format it came from, for messages ("DICOM", "NRRD", ...). */
  format: string;
  /** What a DICOM input carried about the patient and study. */
  dicom?: DicomContext;
}

/** Slice k of a volume as a 2D image (values as stored). */
export function volumeSlice(v: ImageVolume, k: number): Image2D {
  if (!Number.isInteger(k) || k < 0 || k >= v.nz) throw new InputError(`slice: got ${k}, expected 0 to ${v.nz - 1} (the ${v.format} data hold ${v.nz} slices)`);
  const [dx, dy] = v.spacing;
  const grid = checkGrid({ nx: v.nx, ny: v.ny, dx, dy, cx: v.origin[0] + ((v.nx - 1) / 2) * dx, cy: v.origin[1] + ((v.ny - 1) / 2) * dy });
  const n = v.nx * v.ny;
  const data = v.nz === 1 ? v.data : v.data.slice(k * n, (k + 1) * n);
  const quantity = v.quantity === 'unknown' ? 'mu' : v.quantity;
  return { grid, data, quantity, muWater: v.muWater, fovRadius: v.fovRadius, ...(v.description !== undefined ? { description: v.description } : {}) };
}

/** An image in mu (1/mm): HU images are converted with mu_water (the file's or the one given). */
export function imageAsMu(image: Image2D, muWater?: number): Image2D {
  if (image.quantity === 'mu') return muWater !== undefined ? { ...image, muWater } : image;
  const mw = muWater ?? image.muWater;
  if (!(mw && mw > 0)) throw new InputError('image: values are HU but mu_water is unknown', { remedy: MU_WATER_REMEDY });
  return { ...image, data: huToMu(image.data, mw), quantity: 'mu', muWater: mw };
}

/** A 2D image as a one-slice volume. */
export function imageAsVolume(image: Image2D, format: string): ImageVolume {
  const g = image.grid;
  return {
    nx: g.nx, ny: g.ny, nz: 1, spacing: [g.dx, g.dy, 1],
    origin: [g.cx - ((g.nx - 1) / 2) * g.dx, g.cy - ((g.ny - 1) / 2) * g.dy, 0],
    data: image.data, quantity: image.quantity, muWater: image.muWater, fovRadius: image.fovRadius, description: image.description, format,
  };
}

/** Reverses the x, y and/or z axis of a volume (for files whose axes point the other way). */
export function flipAxes(v: ImageVolume, flipX: boolean, flipY: boolean, flipZ = false): ImageVolume {
  if (!flipX && !flipY && !flipZ) return v;
  const { nx, ny, nz } = v;
  const out = new Float32Array(v.data.length);
  for (let k = 0; k < nz; k++) {
    const ks = flipZ ? nz - 1 - k : k;
    for (let j = 0; j < ny; j++) {
      const src = ks * nx * ny + (flipY ? ny - 1 - j : j) * nx;
      const dst = k * nx * ny + j * nx;
      for (let i = 0; i < nx; i++) out[dst + i] = v.data[src + (flipX ? nx - 1 - i : i)];
    }
  }
  const origin: [number, number, number] = [
    flipX ? v.origin[0] - (nx - 1) * v.spacing[0] : v.origin[0],
    flipY ? v.origin[1] - (ny - 1) * v.spacing[1] : v.origin[1],
    flipZ ? v.origin[2] - (nz - 1) * v.spacing[2] : v.origin[2],
  ];
  return { ...v, data: out, origin };
}

/**
 * The data and first-voxel centre of a volume in the LPS frame (patient-frame.ts) with every
 * axis running the positive way: rows reversed (Rimfill's y is anterior), origin (x, -y, z) of
 * the most anterior row.
 */
export function toLps(v: ImageVolume): { data: Float32Array; origin: [number, number, number] } {
  const f = flipAxes(v, false, true);
  return { data: f.data, origin: lpsOrigin(v) };
}

/** The LPS centre of the first voxel as toLps stores it: (x, -y, z) of the most anterior row. */
export function lpsOrigin(v: Pick<ImageVolume, 'origin' | 'ny' | 'spacing'>): [number, number, number] {
  return [v.origin[0], -(v.origin[1] + (v.ny - 1) * v.spacing[1]), v.origin[2]];
}

/**
 * Whole slices (x fastest, `nx` x `ny` each) with their rows reversed, as toLps stores them:
 * the slab-by-slab twin of toLps for writers that stream a volume.
 */
export function rowsToLps(slab: Float32Array, nx: number, ny: number): Float32Array {
  const out = new Float32Array(slab.length);
  const slice = nx * ny;
  for (let at = 0; at < slab.length; at += slice) {
    for (let j = 0; j < ny; j++) out.set(slab.subarray(at + (ny - 1 - j) * nx, at + (ny - j) * nx), at + j * nx);
  }
  return out;
}

/**
 * The volume as the engine's Volume in mu (1/mm), on the grid its voxel centres lie on: the one
 * converter from files (readImageFile: NRRD, MetaImage, raw + JSON, DICOM series, TIFF) to
 * phantoms, priors and references. HU data are converted with mu_water (the one given, else
 * the file's); a grid beyond the engine's limits is refused (checkVolumeGrid).
 */
export function asMuVolume(v: ImageVolume, muWater?: number): Volume {
  const [dx, dy, dz] = v.spacing;
  const grid = checkVolumeGrid({
    nx: v.nx, ny: v.ny, nz: v.nz, dx, dy, dz,
    cx: v.origin[0] + ((v.nx - 1) / 2) * dx, cy: v.origin[1] + ((v.ny - 1) / 2) * dy, cz: v.origin[2] + ((v.nz - 1) / 2) * dz,
  });
  const mw = muWater ?? v.muWater;
  let data = v.data;
  if (v.quantity === 'hu') {
    if (!(mw && mw > 0)) throw new InputError(`volume: the ${v.format} values are HU but mu_water is unknown`, { remedy: MU_WATER_REMEDY });
    data = huToMu(v.data, mw);
  }
  return { grid, data, quantity: 'mu', muWater: mw, fovRadius: v.fovRadius, fovHalfHeight: v.fovHalfHeight, ...(v.description !== undefined ? { description: v.description } : {}) };
}
