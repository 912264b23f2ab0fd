// Reading the CLI's inputs: scans (with an optional geometry side file or preset) and images.
import { InputError } from '../core/errors';
import { presetGeometry, PRESET_NAMES } from '../core/geometry/presets';
import type { Geometry } from '../core/geometry/types';
import { validateGeometry } from '../core/geometry/validate';
import { readImageNrrd } from '../core/formats/image-nrrd';
import { readScanNrrd } from '../core/formats/scan-nrrd';
import { readVolumeNrrd } from '../core/formats/volume-nrrd';
import type { Image2D } from '../core/image';
import type { Scan } from '../core/scan';
import type { Volume } from '../core/volume';
import { readBytes, readJson } from './io';

/** A geometry from a preset name or a JSON file. */
export function loadGeometry(nameOrPath: string): Geometry {
  const preset = presetGeometry(nameOrPath);
  if (preset) return preset;
  if (!nameOrPath.toLowerCase().endsWith('.json')) {
    throw new InputError(`geometry: got "${nameOrPath}", expected a .json file or one of ${PRESET_NAMES.join(', ')}`);
  }
  return validateGeometry(readJson(nameOrPath, 'geometry'));
}

function checkExtension(path: string, what: string): void {
  if (!/\.nrrd$/i.test(path)) throw new InputError(`${what} ${path}: expected a .nrrd file`);
}

/** Reads a scan file; `geometryPath` supplies or replaces its geometry. */
export async function loadScan(path: string, geometryPath?: string): Promise<Scan> {
  checkExtension(path, 'scan');
  const g = geometryPath ? loadGeometry(geometryPath) : undefined;
  return readScanNrrd(readBytes(path, 'scan'), g);
}

/** Reads an image file (values as mu). */
export async function loadImage(path: string, what = 'image', muWater?: number): Promise<Image2D> {
  checkExtension(path, what);
  return readImageNrrd(readBytes(path, what), muWater);
}

/** Reads a volume file (values as mu). */
export async function loadVolume(path: string, what = 'volume', muWater?: number): Promise<Volume> {
  checkExtension(path, what);
  return readVolumeNrrd(readBytes(path, what), muWater);
}
