// A result's undetermined part in its exports: the mask as an NRRD file (the format the command
// line's --undetermined writes: 1 = not determined, on the result's grid) and its share in words
// for the report.
import { countUndetermined, undeterminedWords } from '../../core/dbp/undetermined-count';
import { writeUndeterminedNrrd } from '../../core/dbp/undetermined-nrrd';
import type { DisplayImage } from '../logic/display';
import { fileName, saveFile } from './download';

/** Offers the image's undetermined mask as an NRRD download (nothing when it has none). */
export async function saveUndeterminedMask(image: DisplayImage): Promise<void> {
  if (!image.undetermined) return;
  const bytes = await writeUndeterminedNrrd(image.grid, image.undetermined);
  saveFile(bytes as BlobPart, fileName(`${image.label}-not-determined`, 'nrrd'), 'application/octet-stream');
}

/** "12.5% of the image (0.0% of the field of view) is not determined ...", or undefined when the image has no mask. */
export function undeterminedText(image: DisplayImage): string | undefined {
  if (!image.undetermined) return undefined;
  const c = countUndetermined(image.undetermined, image.grid, image.fovRadius ?? 0);
  return `${undeterminedWords(c)} not determined by the data and the knowledge (${c.pixels} pixels, filled with air; marked in the images and left out of region figures)`;
}
