// Reading one NRRD file's bytes in the tests, through the readers the page and the CLI use
// (volumeFromNrrd, projectionsFromNrrd + assembleScan).
import { InputError } from '../../web/core/errors';
import type { Geometry } from '../../web/core/geometry/types';
import type { Image2D } from '../../web/core/image';
import { volumeFromNrrd } from '../../web/core/formats/image-nrrd';
import type { ReadLimits } from '../../web/core/formats/limits';
import { projectionsFromNrrd } from '../../web/core/formats/scan-nrrd';
import { assembleScan } from '../../web/core/formats/scan-assembly';
import { imageAsMu, volumeSlice } from '../../web/core/formats/volume';
import type { Scan } from '../../web/core/scan';

/** Reads a 2D image as mu (1/mm); HU files need mu_water (in the file or given). */
export async function readImageNrrd(bytes: Uint8Array, muWater?: number, limits?: ReadLimits): Promise<Image2D> {
  const v = await volumeFromNrrd([{ name: 'image.nrrd', bytes }], limits);
  if (v.nz !== 1) throw new InputError(`image: got ${v.nz} slices, expected a 2D image (one slice)`);
  return imageAsMu(volumeSlice(v, 0), muWater);
}

/** Reads a scan file; `geometry` (from a side file) replaces or supplies the geometry. */
export async function readScanNrrd(bytes: Uint8Array, geometry?: Geometry, limits?: ReadLimits): Promise<Scan> {
  return assembleScan(await projectionsFromNrrd([{ name: 'scan.nrrd', bytes }], limits), { geometry }).scan;
}
