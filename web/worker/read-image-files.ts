// Reading image files the page is handed (an earlier reconstruction, a DICOM CT slice or series,
// a user's own model output) into the engine's images: one place for the page's jobs that take
// an image file (prior-check-job.ts, the coordinator's image import).
import { InputError } from '../core/errors';
import { readImage2D, readImageFile } from '../core/formats/read-image';
import { asMuVolume } from '../core/formats/volume';
import type { Image2D } from '../core/image';
import type { Volume } from '../core/volume';
import type { InputFile } from './import-scan';

/** What was read, with the name to show for it and the files it came from. */
export interface ReadImageFiles<T> {
  value: T;
  /** The data file's name (not a header's raw part or a sidecar). */
  name: string;
  fileNames: string[];
  warnings: string[];
}

async function named(files: InputFile[]) {
  if (files.length === 0) throw new InputError('image: no file given; expected NRRD, MetaImage, raw + JSON, DICOM or TIFF');
  return Promise.all(files.map(async (f) => ({ name: f.name, bytes: new Uint8Array(await f.arrayBuffer()) })));
}

/** Runs a reader, naming the files in its message when it refuses them. */
async function naming<T>(fileNames: string[], read: () => Promise<{ value: T; warnings: string[] }>): Promise<ReadImageFiles<T>> {
  try {
    const { value, warnings } = await read();
    return { value, warnings, fileNames, name: fileNames.find((n) => !/\.(raw|json)$/i.test(n)) ?? fileNames[0] };
  } catch (err) {
    if (err instanceof InputError && !err.message.includes(fileNames[0])) throw err.prefixed(fileNames.join(', '));
    throw err;
  }
}

/** One 2D image in mu; HU data use the file's mu_water, else `muWater`; a volume file needs `slice`. */
export async function readImageFiles(files: InputFile[], muWater: number | undefined, slice?: number): Promise<ReadImageFiles<Image2D>> {
  const bytes = await named(files);
  return naming(bytes.map((f) => f.name), async () => {
    const { image, warnings } = await readImage2D(bytes, { muWater, slice });
    return { value: { ...image, muWater: image.muWater ?? muWater }, warnings };
  });
}

/** A volume in mu (a 2D image is a volume of one slice); HU data use the file's mu_water, else `muWater`. */
export async function readVolumeFiles(files: InputFile[], muWater: number | undefined): Promise<ReadImageFiles<Volume>> {
  const bytes = await named(files);
  return naming(bytes.map((f) => f.name), async () => {
    const { volume, warnings } = await readImageFile(bytes);
    return { value: asMuVolume(volume, muWater), warnings };
  });
}
