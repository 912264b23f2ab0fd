// Writing volumes as NRRD float32 (DEVELOPERS.md, "Geometry"): sizes <nx> <ny> <nz>, space left-posterior-
// superior, "space directions" (one vector per axis, mm) and "space origin" (centre of the first
// voxel, mm), rimfill.quantity mu | hu, and the optional rimfill.muWater, rimfill.fovRadius,
// rimfill.fovHalfHeight.
// NRRD format: http://teem.sourceforge.net/nrrd/format.html ("space directions", "space origin").
// Volumes are read like every image, through readImageFile (read-image.ts) and asMuVolume
// (volume.ts).
import { volumeOrigin, type Volume } from '../volume';
import { imageKeys, placedNrrdHeader, writePlacedNrrd } from './image-nrrd';
import type { ImageVolume } from './volume';

/** Writes a volume (values as stored in `volume`) in the LPS frame (image-nrrd.ts writePlacedNrrd). */
export function writeVolumeNrrd(volume: Volume, compress = false): Promise<Uint8Array> {
  return writePlacedNrrd({ ...placed(volume), data: volume.data }, 3, imageKeys(volume), compress);
}

/**
 * The header of an uncompressed float32 volume file in the LPS frame; the slabs follow it, each
 * passed through rowsToLps (volume.ts), in increasing z.
 */
export function volumeNrrdHeader(volume: Omit<Volume, 'data'>): Uint8Array {
  return placedNrrdHeader(placed(volume), 3, imageKeys(volume));
}

function placed(volume: Omit<Volume, 'data'>): Omit<ImageVolume, 'data'> {
  const g = volume.grid;
  const { x0, y0, z0 } = volumeOrigin(g);
  return { nx: g.nx, ny: g.ny, nz: g.nz, spacing: [g.dx, g.dy, g.dz], origin: [x0, y0, z0], quantity: volume.quantity, format: 'NRRD', description: volume.description };
}
