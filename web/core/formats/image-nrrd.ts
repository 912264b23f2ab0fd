// Images as NRRD with "space directions" and "space origin" (mm, origin = centre of the first
// pixel) and rimfill.quantity mu | hu (DEVELOPERS.md, "Geometry"); 2D images or 3D volumes. Axis-aligned
// directions only; a negative direction is turned positive by flipping the data along that axis.
// A named `space` (patient or scanner frame) is mapped into Rimfill's image frame
// (patient-frame.ts); without one the file is in Rimfill's frame. Written files name their frame:
// left-posterior-superior, rows from anterior to posterior.
import { InputError } from '../errors';
import type { Image2D } from '../image';
import type { ReadLimits } from './limits';
import type { NamedBytes } from './named-file';
import { nrrdHeaderBytes, parseNrrd, writeNrrd, type WrittenType } from './nrrd';
import { positiveKey } from './projections';
import { NRRD_EXPORT_SPACE, nrrdSpaceSigns } from './patient-frame';
import { flipAxes, imageAsVolume, lpsOrigin, toLps, type ImageVolume, type VolumeQuantity } from './volume';

function vectors(text: string | undefined): number[][] {
  if (!text) return [];
  return [...text.matchAll(/\(([^)]*)\)|none/g)].map((m) => (m[1] === undefined ? [] : m[1].split(',').map(Number)));
}

/** A non-negative length from a key, or undefined when absent. */
function optionalLength(keys: Record<string, string>, key: string, what: string): number | undefined {
  if (keys[key] === undefined) return undefined;
  const v = Number(keys[key]);
  if (!(v >= 0) || !Number.isFinite(v)) throw new InputError(`image ${key}: got "${keys[key]}", expected ${what}`);
  return v;
}

/** Checks "space units" (when given): every axis in mm. */
function checkUnits(text: string | undefined): void {
  if (text === undefined) return;
  const units = [...text.matchAll(/"([^"]*)"/g)].map((m) => m[1].trim().toLowerCase());
  if (units.some((u) => u !== 'mm')) throw new InputError(`image space units: got ${text}, expected "mm" for every axis`);
}

/** Reads a 2D image or 3D volume from NRRD (files[0]; a detached data file among the rest). */
export async function volumeFromNrrd(files: readonly NamedBytes[], limits?: ReadLimits): Promise<ImageVolume> {
  const n = await parseNrrd(files[0].bytes, { ...limits, files });
  if (n.sizes.length < 2 || n.sizes.length > 3) throw new InputError(`image: got sizes ${n.sizes.join(' ')}, expected a 2D image or a 3D volume`);
  const [nx, ny, nz = 1] = n.sizes;
  const frame = nrrdSpaceSigns(n.fields.space);
  checkUnits(n.fields['space units']);
  const toRimfill = (v: number[]) => (frame ? v.map((x, k) => x * (frame[k] ?? 1)) : v);
  const dirs = vectors(n.fields['space directions']).filter((v) => v.length > 0).map(toRimfill);
  const spacing: [number, number, number] = [1, 1, 1];
  const signs = [1, 1, 1];
  if (dirs.length > 0 && dirs.length !== n.sizes.length) {
    throw new InputError(`image space directions: got "${n.fields['space directions']}", expected ${n.sizes.length} vectors, one per axis (mm)`);
  }
  if (frame && dirs.some((d) => d.length !== 3)) throw new InputError(`image space directions: got "${n.fields['space directions']}", expected vectors of 3 coordinates (space ${n.fields.space})`);
  if (dirs.length >= 2) {
    dirs.forEach((d, axis) => {
      const len = Math.hypot(...d);
      if (!(len > 0) || d.some((x, k) => k !== axis && Math.abs(x) > 1e-6 * len)) {
        throw new InputError(`image space directions: got "${n.fields['space directions']}", expected axis-aligned directions, axis i along x, j along y${n.sizes.length > 2 ? ', k along z' : ''} (resample rotated images first)`);
      }
      spacing[axis] = len;
      signs[axis] = Math.sign(d[axis]);
    });
  } else if (n.fields.spacings) {
    n.fields.spacings.split(/\s+/).map(Number).slice(0, 3).forEach((s, axis) => { spacing[axis] = s; });
  }
  if (spacing.some((s) => !(s > 0) || !Number.isFinite(s))) throw new InputError(`image spacing: got ${spacing.join(' ')}, expected positive pixel sizes in mm`);
  const given = vectors(n.fields['space origin'])[0];
  const origin = given ? toRimfill(given) : undefined;
  const o: [number, number, number] = [0, 1, 2].map((k) => origin?.[k] ?? -(([nx, ny, nz][k] - 1) / 2) * spacing[k] * signs[k]) as [number, number, number];
  if (o.some((x) => !Number.isFinite(x))) throw new InputError(`image space origin: got "${n.fields['space origin']}", expected finite coordinates in mm`);
  const quantity = n.keys['rimfill.quantity'] ?? 'unknown';
  if (quantity !== 'mu' && quantity !== 'hu' && quantity !== 'unknown') throw new InputError(`image rimfill.quantity: got "${quantity}", expected mu or hu`);
  const fov = optionalLength(n.keys, 'rimfill.fovRadius', 'a radius in mm');
  const fovHalfHeight = optionalLength(n.keys, 'rimfill.fovHalfHeight', 'a half height in mm');
  const volume: ImageVolume = {
    nx, ny, nz, spacing, origin: o, data: n.data, quantity: quantity as VolumeQuantity,
    muWater: positiveKey(n.keys['rimfill.muWater'], 'image rimfill.muWater', 'mu of water in 1/mm'), fovRadius: fov, fovHalfHeight, format: 'NRRD',
    ...(n.keys['rimfill.description'] ? { description: n.keys['rimfill.description'] } : {}),
  };
  return flipAxes(volume, signs[0] < 0, signs[1] < 0, signs[2] < 0);
}

/** Writes a 2D image (values as stored in `image`), float32 or int16 (rounded, clamped), in the LPS frame at z = 0. */
export function writeImageNrrd(image: Image2D, compress = false, type: WrittenType = 'float32'): Promise<Uint8Array> {
  return writePlacedNrrd(imageAsVolume(image, 'NRRD'), 2, imageKeys(image), compress, type);
}

/** Our keys of an image or volume. */
export function imageKeys(v: { quantity: string; muWater?: number; fovRadius?: number; fovHalfHeight?: number; description?: string }): Record<string, string> {
  const keys: Record<string, string> = { 'rimfill.quantity': v.quantity };
  if (v.description) keys['rimfill.description'] = v.description.replace(/[\r\n]+/g, ' ');
  if (v.muWater !== undefined) keys['rimfill.muWater'] = String(v.muWater);
  if (v.fovRadius !== undefined) keys['rimfill.fovRadius'] = String(v.fovRadius);
  if (v.fovHalfHeight !== undefined) keys['rimfill.fovHalfHeight'] = String(v.fovHalfHeight);
  return keys;
}

/**
 * Writes the first `dims` axes of a volume (2: one slice) in the LPS frame with rows running
 * from anterior to posterior (patient-frame.ts), so every direction is positive.
 */
export function writePlacedNrrd(v: ImageVolume, dims: 2 | 3, keys: Record<string, string>, compress = false, type: WrittenType = 'float32'): Promise<Uint8Array> {
  const p = toLps(v);
  return writeNrrd(p.data, [v.nx, v.ny, v.nz].slice(0, dims), placedFields(v, p.origin, dims), keys, compress, type);
}

/**
 * The header of an uncompressed float32 file as writePlacedNrrd writes it, for writers that
 * stream the voxels after it (each slice with its rows reversed, volume.ts rowsToLps).
 */
export function placedNrrdHeader(v: Omit<ImageVolume, 'data'>, dims: 2 | 3, keys: Record<string, string>): Uint8Array {
  return nrrdHeaderBytes([v.nx, v.ny, v.nz].slice(0, dims), placedFields(v, lpsOrigin(v), dims), keys);
}

function placedFields(v: Omit<ImageVolume, 'data'>, origin: readonly number[], dims: 2 | 3): Record<string, string> {
  const [dx, dy, dz] = v.spacing;
  return {
    space: NRRD_EXPORT_SPACE,
    'space directions': [`(${dx},0,0)`, `(0,${dy},0)`, `(0,0,${dz})`].slice(0, dims).join(' '),
    'space origin': `(${origin.join(',')})`,
    'space units': Array(3).fill('"mm"').join(' '),
    kinds: Array(dims).fill('domain').join(' '),
  };
}
