// rimfill compare: figures of merit of an image against a reference and/or the measured data.
import { compareImages, type Comparison } from '../../core/compare';
import { dataResidual, type DataResidual } from '../../core/data-residual';
import { InputError } from '../../core/errors';
import type { Image2D } from '../../core/image';
import type { Scan } from '../../core/scan';
import type { Volume } from '../../core/volume';
import { volumeDataResidual } from '../../core/volume-residual';
import { parseArgs, type ParsedArgs } from '../args';
import { openWorkspace } from '../engine-node';
import { readImageFile } from '../../core/formats/read-image';
import { asMuVolume, imageAsMu, volumeSlice } from '../../core/formats/volume';
import { gatherFiles } from '../gather';
import { loadScan, memoryLimit, SCAN_INPUT_HELP, SCAN_INPUT_OPTIONS } from '../load';
import { compareVolumeFiles } from './compare-volume';
import type { CommandResult } from './types';

export const compareHelp = `rimfill compare image.nrrd [--reference truth.nrrd] [--scan scan.nrrd] [--fov]
    [--fov-radius mm] [--fov-half-height mm] [--per-slice] [--undetermined mask.nrrd] [--workers N] [--json]
${SCAN_INPUT_HELP}
  With --reference: RMSE (HU when mu_water is known), PSNR and SSIM (Wang et al. 2004) over the
  image, the object, and with --fov inside and outside the measured field of view (radius from
  the image file, or --fov-radius), plus cupping (rim / centre inside the FOV against the
  reference's). With --scan: the data residual of the image re-projected onto the scan's
  measured channels. At least one of the two. Images may be NRRD, MetaImage, raw + JSON, DICOM
  or TIFF. mu_water (--mu-water, else the files' or the scan's) turns HU into mu; two HU images
  compare in HU without it. A reference that covers less than 90% of the image is reported
  with the share it covers; one that does not overlap it at all is refused. --undetermined: the
  mask of pixels the image does not determine (as reconstruct --method dbp --undetermined writes
  it, or any mask on the image's grid, 1 = not determined): they enter no figure, and the data
  residual is marked, since measured rays cross them.`;

function table(c: Comparison): string {
  const rows = [['region', 'pixels', `RMSE (${c.unit})`, 'PSNR (dB)', 'SSIM']];
  for (const [name, f] of Object.entries(c.regions)) {
    if (f) rows.push([name, String(f.pixels), f.rmse.toFixed(c.unit === 'HU' ? 1 : 6), f.psnr.toFixed(2), f.ssim.toFixed(4)]);
  }
  const w = rows[0].map((_, i) => Math.max(...rows.map((r) => r[i].length)));
  const lines = rows.map((r) => r.map((s, i) => (i ? s.padStart(w[i]) : s.padEnd(w[i]))).join('  '));
  if (c.cupping) {
    const k = c.cupping;
    lines.push(`cupping inside the FOV: rim / centre ${k.ratio.toFixed(3)}${k.referenceRatio === null ? '' : ` (reference ${k.referenceRatio.toFixed(3)})`}, excess ${(100 * k.excess).toFixed(1)}%`);
  }
  return lines.join('\n');
}

function residualLine(r: DataResidual): string {
  return `data residual on the measured channels: RMS ${r.rms.toPrecision(3)} (relative ${(100 * r.relative).toFixed(2)}%), bias ${r.bias.toPrecision(3)}, worst view ${r.worstView} (RMS ${r.worstViewRms.toPrecision(3)})`;
}

/** The data residual of an image or volume against a scan, on a workspace opened for it. */
async function residualOf(a: ParsedArgs, scan: Scan, image: Image2D | undefined, volume: Volume | undefined): Promise<DataResidual> {
  const ws = await openWorkspace(a.options.workers as number | undefined);
  try {
    return volume ? await volumeDataResidual(ws, volume, scan) : await dataResidual(ws, image!, scan);
  } finally {
    ws.dispose();
  }
}

/**
 * Two images in HU compare without mu_water: read with mu_water = 1 they hold mu / mu_water =
 * 1 + HU / 1000, which compareImages turns back into the same HU (the object threshold and the
 * cupping ratios are relative to mu_water too, so they do not depend on its value).
 */
const RELATIVE_MU_WATER = 1;

/** The image and reference as read, and the mu_water that turns them into mu. */
async function readInputs(a: ParsedArgs, path: string, refPath: string | undefined, scan: Scan | undefined) {
  const read = async (p: string, what: string) => readImageFile(gatherFiles(p, what), { maxBytes: memoryLimit(a) });
  const image = await read(path, 'image');
  const reference = refPath ? await read(refPath, 'reference') : undefined;
  const given = a.options['mu-water'] as number | undefined;
  let muWater = given ?? image.volume.muWater ?? reference?.volume.muWater ?? scan?.muWater;
  const notes: string[] = [];
  if (muWater === undefined && image.volume.quantity === 'hu' && reference?.volume.quantity === 'hu' && !scan) {
    muWater = RELATIVE_MU_WATER;
    notes.push('both images hold HU and neither records mu_water: compared in HU as they are (cupping centre and rim in units of mu_water)');
  }
  return { image: image.volume, reference: reference?.volume, muWater, warnings: [...image.warnings, ...(reference?.warnings ?? []), ...notes] };
}

export async function compare(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, {
    ...SCAN_INPUT_OPTIONS, reference: 'string', scan: 'string', fov: 'flag', 'fov-radius': 'number', 'fov-half-height': 'number',
    'per-slice': 'flag', undetermined: 'string', workers: 'int', json: 'flag',
  }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('compare: give the image file, e.g. rimfill compare image.nrrd --reference truth.nrrd');
  const refPath = a.options.reference as string | undefined, scanPath = a.options.scan as string | undefined;
  if (!refPath && !scanPath) throw new InputError('compare: give --reference truth.nrrd, --scan scan.nrrd, or both');
  const scan = scanPath ? await loadScan(scanPath, a) : undefined;
  const inputs = await readInputs(a, path, refPath, scan);
  const mw = inputs.muWater;
  if (inputs.image.nz > 1) {
    if (a.options.undetermined !== undefined) throw new InputError('option --undetermined: only for images (this file holds a volume of several slices)');
    const volume = asMuVolume(inputs.image, mw);
    const v = compareVolumeFiles(a, volume, inputs.reference && asMuVolume(inputs.reference, mw), refPath);
    const residual = scan ? await residualOf(a, scan, undefined, volume) : undefined;
    const text = [v.text, residual ? residualLine(residual) : ''].filter(Boolean).join('\n');
    return { json: { ...(v.comparison ?? {}), ...(residual ? { residual } : {}) }, text, warnings: [...inputs.warnings, ...(v.comparison?.notes ?? [])] };
  }
  if (a.options['per-slice'] || a.options['fov-half-height'] !== undefined) throw new InputError('options --per-slice and --fov-half-height: only for volumes (this image has one slice)');
  const image = imageAsMu(volumeSlice(inputs.image, 0), mw);
  const undetermined = a.options.undetermined !== undefined ? await readUndetermined(a, a.options.undetermined as string, image) : undefined;
  let comparison: Comparison | undefined;
  if (inputs.reference) {
    if (inputs.reference.nz > 1) throw new InputError(`reference ${refPath}: got ${inputs.reference.nz} slices, expected one image to compare with the image`);
    const reference = imageAsMu(volumeSlice(inputs.reference, 0), mw);
    let fov: number | undefined;
    if (a.options['fov-radius'] !== undefined) fov = a.options['fov-radius'] as number;
    else if (a.options.fov) {
      fov = image.fovRadius ?? reference.fovRadius;
      if (fov === undefined) throw new InputError('option --fov: neither file records the field of view; give --fov-radius mm');
    }
    comparison = compareImages(image, reference, fov, undetermined?.mask);
  }
  const residual = scan ? await residualOf(a, scan, image, undefined) : undefined;
  const caveat = residual && undetermined?.count ? `the image leaves ${undetermined.count} pixels undetermined that measured rays cross: the data residual mostly measures what fills them, not the determined part` : undefined;
  const text = [comparison ? table(comparison) : '', residual ? residualLine(residual) : ''].filter(Boolean).join('\n');
  return {
    json: { ...(comparison ?? {}), ...(residual ? { residual } : {}), ...(caveat ? { residualCaveat: caveat } : {}) },
    text, warnings: [...inputs.warnings, ...(comparison?.notes ?? []), ...(caveat ? [caveat] : [])],
  };
}

/** The mask of undetermined pixels (--undetermined), on the image's grid: values above 0.5 mark a pixel. */
async function readUndetermined(a: ParsedArgs, path: string, image: Image2D): Promise<{ mask: Uint8Array; count: number }> {
  const file = await readImageFile(gatherFiles(path, 'mask of undetermined pixels'), { maxBytes: memoryLimit(a) });
  const v = file.volume;
  const { nx, ny } = image.grid;
  if (v.nz !== 1 || v.nx !== nx || v.ny !== ny) {
    throw new InputError(`option --undetermined ${path}: got a ${v.nx} x ${v.ny}${v.nz > 1 ? ` x ${v.nz}` : ''} mask, expected one of ${nx} x ${ny} pixels (the image's grid)`);
  }
  const mask = new Uint8Array(nx * ny);
  let count = 0;
  for (let q = 0; q < mask.length; q++) {
    if (!Number.isFinite(v.data[q])) throw new InputError(`option --undetermined ${path}: pixel ${q} is not a number; a mask holds 0 and 1`);
    if (v.data[q] > 0.5) { mask[q] = 1; count++; }
  }
  return { mask, count };
}
