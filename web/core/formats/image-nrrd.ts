// Images as NRRD with "space directions" and "space origin" (mm, origin = centre of the first
// pixel) and rimfill.quantity mu | hu (DEVELOPERS.md, "Geometry"); 2D images or 3D volumes. Axis-aligned
// directions only; a negative direction is turned positive by flipping the data along that axis.
import { InputError } from '../errors';
import type { Image2D } from '../image';
import type { ReadLimits } from './limits';
import type { NamedBytes } from './named-file';
import { parseNrrd, writeNrrd, type WrittenType } from './nrrd';
import { positiveKey } from './projections';
import { flipAxes, type ImageVolume, type VolumeQuantity } from './volume';

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

/** Reads a 2D image or 3D volume from NRRD (files[0]; a detached data file among the rest). */
export async function volumeFromNrrd(files: readonly NamedBytes[], limits?: ReadLimits): Promise<ImageVolume> {
  const n = await parseNrrd(files[0].bytes, { ...limits, files });
  if (n.sizes.length < 2 || n.sizes.length > 3) throw new InputError(`image: got sizes ${n.sizes.join(' ')}, expected a 2D image or a 3D volume`);
  const [nx, ny, nz = 1] = n.sizes;
  const dirs = vectors(n.fields['space directions']).filter((v) => v.length > 0);
  const spacing: [number, number, number] = [1, 1, 1];
  const signs = [1, 1, 1];
  if (dirs.length > 0 && dirs.length !== n.sizes.length) {
    throw new InputError(`image space directions: got "${n.fields['space directions']}", expected ${n.sizes.length} vectors, one per axis (mm)`);
  }
  if (dirs.length >= 2) {
    dirs.forEach((d, axis) => {
      const len = Math.hypot(...d);
      if (!(len > 0) || d.some((x, k) => k !== axis && Math.abs(x) > 1e-6 * len)) {
        throw new InputError(`image space directions: got "${n.fields['space directions']}", expected axis-aligned directions (resample rotated images first)`);
      }
      spacing[axis] = len;
      signs[axis] = Math.sign(d[axis]);
    });
  } else if (n.fields.spacings) {
    n.fields.spacings.split(/\s+/).map(Number).slice(0, 3).forEach((s, axis) => { spacing[axis] = s; });
  }
  if (spacing.some((s) => !(s > 0) || !Number.isFinite(s))) throw new InputError(`image spacing: got ${spacing.join(' ')}, expected positive pixel sizes in mm`);
  const origin = vectors(n.fields['space origin'])[0];
  const o: [number, number, number] = [0, 1, 2].map((k) => origin?.[k] ?? -(([nx, ny, nz][k] - 1) / 2) * spacing[k] * signs[k]) as [number, number, number];
  if (o.some((x) => !Number.isFinite(x))) throw new InputError(`image space origin: got "${n.fields['space origin']}", expected finite coordinates in mm`);
  const quantity = n.keys['rimfill.quantity'] ?? 'unknown';
  if (quantity !== 'mu' && quantity !== 'hu' && quantity !== 'unknown') throw new InputError(`image rimfill.quantity: got "${quantity}", expected mu or hu`);
  const fov = optionalLength(n.keys, 'rimfill.fovRadius', 'a radius in mm');
  const fovHalfHeight = optionalLength(n.keys, 'rimfill.fovHalfHeight', 'a half height in mm');
  const volume: ImageVolume = {
    nx, ny, nz, spacing, origin: o, data: n.data, quantity: quantity as VolumeQuantity,
    muWater: positiveKey(n.keys['rimfill.muWater'], 'image rimfill.muWater', 'mu of water in 1/mm'), fovRadius: fov, fovHalfHeight, format: 'NRRD',
  };
  return flipAxes(volume, signs[0] < 0, signs[1] < 0, signs[2] < 0);
}

/** Writes a 2D image (values as stored in `image`), float32 or int16 (rounded, clamped). */
export function writeImageNrrd(image: Image2D, compress = false, type: WrittenType = 'float32'): Promise<Uint8Array> {
  const g = image.grid;
  const x0 = g.cx - ((g.nx - 1) / 2) * g.dx, y0 = g.cy - ((g.ny - 1) / 2) * g.dy;
  const keys: Record<string, string> = { 'rimfill.quantity': image.quantity };
  if (image.muWater !== undefined) keys['rimfill.muWater'] = String(image.muWater);
  if (image.fovRadius !== undefined) keys['rimfill.fovRadius'] = String(image.fovRadius);
  return writeNrrd(image.data, [g.nx, g.ny], {
    'space dimension': '2',
    'space directions': `(${g.dx},0) (0,${g.dy})`,
    'space origin': `(${x0},${y0})`,
    'space units': '"mm" "mm"',
  }, keys, compress, type);
}
