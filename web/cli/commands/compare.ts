// rimfill compare: figures of merit of an image against a reference.
import { compareImages } from '../../core/compare';
import { InputError } from '../../core/errors';
import { parseArgs, requireString } from '../args';
import { loadImage } from '../load';
import type { CommandResult } from './types';

export const compareHelp = `rimfill compare image.nrrd --reference truth.nrrd [--fov] [--fov-radius mm] [--mu-water X] [--json]
  RMSE (HU when mu_water is known), PSNR and SSIM over the image, the object, and with --fov
  inside and outside the measured field of view (radius from the image file, or --fov-radius).
  Either image may be NRRD, MetaImage, raw + JSON, DICOM or TIFF; HU images need mu_water.`;

function table(c: ReturnType<typeof compareImages>): string {
  const rows = [['region', 'pixels', `RMSE (${c.unit})`, 'PSNR (dB)', 'SSIM']];
  for (const [name, f] of Object.entries(c.regions)) {
    if (f) rows.push([name, String(f.pixels), f.rmse.toFixed(c.unit === 'HU' ? 1 : 6), f.psnr.toFixed(2), f.ssim.toFixed(4)]);
  }
  const w = rows[0].map((_, i) => Math.max(...rows.map((r) => r[i].length)));
  return rows.map((r) => r.map((s, i) => (i ? s.padStart(w[i]) : s.padEnd(w[i]))).join('  ')).join('\n');
}

export async function compare(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, { reference: 'string', fov: 'flag', 'fov-radius': 'number', 'mu-water': 'number', json: 'flag' }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('compare: give the image file, e.g. rimfill compare image.nrrd --reference truth.nrrd');
  const image = await loadImage(path, 'image', a.options['mu-water'] as number | undefined);
  const reference = await loadImage(requireString(a, 'reference'), 'reference', image.muWater);
  let fov: number | undefined;
  if (a.options['fov-radius'] !== undefined) fov = a.options['fov-radius'] as number;
  else if (a.options.fov) {
    fov = image.fovRadius ?? reference.fovRadius;
    if (fov === undefined) throw new InputError('option --fov: neither file records the field of view; give --fov-radius mm');
  }
  const c = compareImages(image, reference, fov);
  return { json: c, text: table(c), warnings: c.notes };
}
