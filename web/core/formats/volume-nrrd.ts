// Writing volumes as NRRD float32 (design.md): sizes <nx> <ny> <nz>, "space directions" (one
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

/** True when NRRD bytes hold a 3-axis array with more than one slice (a volume, not an image). */
export function isVolumeNrrd(bytes: Uint8Array): boolean {
  const head = new TextDecoder().decode(bytes.subarray(0, Math.min(bytes.length, 4096)));
  const m = /^sizes:\s*([^\n]*)$/m.exec(head);
  const sizes = m ? m[1].trim().split(/\s+/).map(Number) : [];
  return sizes.length === 3 && sizes[2] > 1;
}
