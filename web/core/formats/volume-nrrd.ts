// Writing volumes as NRRD float32 (DEVELOPERS.md, "Geometry"): sizes <nx> <ny> <nz>, "space directions" (one
// vector per axis, mm) and "space origin" (centre of the first voxel, mm), rimfill.quantity
// mu | hu, and the optional rimfill.muWater, rimfill.fovRadius, rimfill.fovHalfHeight.
// NRRD format: http://teem.sourceforge.net/nrrd/format.html ("space directions", "space origin").
// Volumes are read like every image, through readImageFile (read-image.ts) and asMuVolume
// (volume.ts).
import { volumeOrigin, type Volume } from '../volume';
import { nrrdHeaderBytes, writeNrrd } from './nrrd';

/** Writes a volume (values as stored in `volume`). */
export function writeVolumeNrrd(volume: Volume, compress = false): Promise<Uint8Array> {
  const { fields, keys } = volumeNrrdFields(volume);
  return writeNrrd(volume.data, [volume.grid.nx, volume.grid.ny, volume.grid.nz], fields, keys, compress);
}

/** The header of an uncompressed float32 volume file; the voxels (x fastest) follow it. */
export function volumeNrrdHeader(volume: Omit<Volume, 'data'>): Uint8Array {
  const { fields, keys } = volumeNrrdFields(volume);
  return nrrdHeaderBytes([volume.grid.nx, volume.grid.ny, volume.grid.nz], fields, keys);
}

function volumeNrrdFields(volume: Omit<Volume, 'data'>): { fields: Record<string, string>; keys: Record<string, string> } {
  const g = volume.grid;
  const { x0, y0, z0 } = volumeOrigin(g);
  const keys: Record<string, string> = { 'rimfill.quantity': volume.quantity };
  if (volume.muWater !== undefined) keys['rimfill.muWater'] = String(volume.muWater);
  if (volume.fovRadius !== undefined) keys['rimfill.fovRadius'] = String(volume.fovRadius);
  if (volume.fovHalfHeight !== undefined) keys['rimfill.fovHalfHeight'] = String(volume.fovHalfHeight);
  return {
    keys,
    fields: {
      'space dimension': '3',
      'space directions': `(${g.dx},0,0) (0,${g.dy},0) (0,0,${g.dz})`,
      'space origin': `(${x0},${y0},${z0})`,
      'space units': '"mm" "mm" "mm"',
      kinds: 'domain domain domain',
    },
  };
}
