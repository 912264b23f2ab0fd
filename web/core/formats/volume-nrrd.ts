// Writing volumes as NRRD float32 (DEVELOPERS.md, "Geometry"): sizes <nx> <ny> <nz>, space left-posterior-
// superior, "space directions" (one vector per axis, mm) and "space origin" (centre of the first
// voxel, mm), rimfill.quantity mu | hu, and the optional rimfill.muWater, rimfill.fovRadius,
// rimfill.fovHalfHeight.
// NRRD format: http://teem.sourceforge.net/nrrd/format.html ("space directions", "space origin").
// Volumes are read like every image, through readImageFile (read-image.ts) and asMuVolume
// (volume.ts).
import { volumeOrigin, type Volume } from '../volume';
import { imageKeys, writePlacedNrrd } from './image-nrrd';
import type { ImageVolume } from './volume';

/** Writes a volume (values as stored in `volume`) in the LPS frame (image-nrrd.ts writePlacedNrrd). */
export function writeVolumeNrrd(volume: Volume, compress = false): Promise<Uint8Array> {
  const g = volume.grid;
  const { x0, y0, z0 } = volumeOrigin(g);
  const v: ImageVolume = { nx: g.nx, ny: g.ny, nz: g.nz, spacing: [g.dx, g.dy, g.dz], origin: [x0, y0, z0], data: volume.data, quantity: volume.quantity, format: 'NRRD', description: volume.description };
  return writePlacedNrrd(v, 3, imageKeys(volume), compress);
}
