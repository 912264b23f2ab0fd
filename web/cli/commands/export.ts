// rimfill export: writes an image (any readable format) as NRRD, MetaImage or PNG at a window,
// or, with --scan, a scan (any readable projection format, preprocessed) as the design's scan
// NRRD of line integrals.
import { InputError } from '../../core/errors';
import { readImageFile } from '../../core/formats/read-image';
import { writeScanNrrd } from '../../core/formats/scan-nrrd';
import { volumeSlice } from '../../core/formats/volume';
import { formatFromName, writeImageFile } from '../../core/formats/write-image';
import { checkMuWater } from '../../core/preprocess/hu-calibration';
import { parseArgs, requireString, type ParsedArgs } from '../args';
import { gatherFiles } from '../gather';
import { checkOutputs, PendingWrites, replacedWarnings } from '../io';
import { loadScanWithReport, memoryLimit, SCAN_INPUT_HELP, SCAN_INPUT_OPTIONS } from '../load';
import { existsSync, mkdirSync, readdirSync, rmSync, statSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { writeDicomSeries } from '../../core/formats/dicom-write';
import { muToHu } from '../../core/image';
import type { CommandResult } from './types';

export const exportHelp = `rimfill export <image file or folder> --to out.nrrd|out.mha|out.mhd|out.png
    [--hu | --mu] [--int16] [--window W --level L] [--mu-water X] [--slice k] [--compress] [--json]
  Writes an image (NRRD, MetaImage, raw + JSON, DICOM file or series folder, TIFF) as NRRD or
  MetaImage (float32 mu, float32 HU, or --int16 HU) or as an 8-bit PNG shown at a window
  (--window width, --level centre, in HU: an image in mu is converted with its mu_water or
  --mu-water; with --mu the window is in 1/mm). A window that misses the image is refused.
  HU <-> mu needs mu_water.
rimfill export <image file or folder> --dicom --to folder/ [--description text] [--mu-water X] [--json]
  Writes an image or volume as a DICOM CT image series in folder/ (created; it must hold no
  .dcm files yet): one file per axial slice, 16-bit values with the rescale to HU, positions in
  the patient frame (LPS), derived-image type, new UIDs made on this machine, the series
  described by the method and its knowledge (--description, else the file's own description).
  Patient and study attributes are copied only from a DICOM input, else left empty.
rimfill export <scan file or folder> --scan --to scan.nrrd [--compress] [--json]
${SCAN_INPUT_HELP}
  Writes projections (any readable format, intensities converted) as a Rimfill scan file.`;

async function exportScan(path: string, out: string, a: ParsedArgs): Promise<CommandResult> {
  if (!/\.nrrd$/i.test(out)) throw new InputError(`option --to: got "${out}", expected a .nrrd scan file`);
  const r = await loadScanWithReport(path, a);
  const writes = new PendingWrites();
  writes.add(out, await writeScanNrrd(r.scan, Boolean(a.options.compress)));
  r.warnings.push(...replacedWarnings(writes.commit()));
  const d = r.scan.geometry.detector;
  const views = r.scan.data.length / (d.channels * d.rows);
  return {
    json: { out, format: r.format, channels: d.channels, rows: d.rows, views, muWater: r.scan.muWater ?? null, preprocessing: r.intensity ?? null },
    text: `wrote ${out}: ${views} views x ${d.rows} rows x ${d.channels} channels of line integrals (from ${r.format})`,
    warnings: r.warnings,
  };
}

/** Refuses an output folder that already holds DICOM files (two series would mix). */
function checkDicomFolder(out: string): void {
  if (!existsSync(out)) return;
  if (!statSync(out).isDirectory()) throw new InputError(`option --to: "${out}" is a file; --dicom writes a folder of slices`);
  const dcm = readdirSync(out).filter((f) => /\.dcm$/i.test(f));
  if (dcm.length) throw new InputError(`option --to: the folder ${out} already holds ${dcm.length} .dcm files; give an empty or new folder`);
}

async function exportDicom(path: string, out: string, a: ParsedArgs): Promise<CommandResult> {
  for (const k of ['hu', 'mu', 'int16', 'window', 'level', 'slice', 'compress']) if (a.options[k] !== undefined) throw new InputError(`option --${k}: not with --dicom (DICOM holds HU, every slice)`);
  checkDicomFolder(out);
  const { volume, warnings } = await readImageFile(gatherFiles(path, 'image'), { maxBytes: memoryLimit(a) });
  const mw = a.options['mu-water'] as number | undefined;
  const muWater = mw !== undefined ? checkMuWater(mw, 'option --mu-water') : volume.muWater;
  if (volume.quantity !== 'hu' && !muWater) throw new InputError(`export --dicom: the ${volume.format} values are mu; give mu_water (--mu-water) to turn them into HU`);
  const hu = volume.quantity === 'hu' ? volume : { ...volume, data: muToHu(volume.data, muWater!), quantity: 'hu' as const };
  const series = writeDicomSeries({ volume: hu, description: a.options.description as string | undefined });
  const created = !existsSync(out);
  mkdirSync(out, { recursive: true });
  const writes = new PendingWrites();
  const names = series.files.map((f) => join(out, f.name));
  series.files.forEach((f, i) => {
    writes.add(names[i], f.bytes);
  });
  try {
    writes.commit();
  } catch (err) {
    if (created) rmSync(out, { recursive: true, force: true });
    throw err;
  }
  return {
    json: { written: names, from: volume.format, nx: volume.nx, ny: volume.ny, slices: volume.nz, seriesInstanceUid: series.seriesUid, rescale: series.rescale },
    text: `wrote ${names.length} DICOM CT file${names.length > 1 ? 's' : ''} to ${out}: ${volume.nx} x ${volume.ny} pixels${volume.nz > 1 ? ` x ${volume.nz} slices` : ''} from ${volume.format}, HU = stored x ${series.rescale.slope} + ${series.rescale.intercept}`,
    warnings: [...warnings, ...series.warnings],
  };
}

export async function exportCommand(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, {
    to: 'string', hu: 'flag', mu: 'flag', int16: 'flag', window: 'number', level: 'number', slice: 'int', compress: 'flag',
    scan: 'flag', dicom: 'flag', description: 'string', json: 'flag', ...SCAN_INPUT_OPTIONS,
  }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('export: give the input, e.g. rimfill export image.dcm --to image.png --window 400 --level 40');
  const out = requireString(a, 'to');
  if (a.options.scan && a.options.dicom) throw new InputError('options --scan and --dicom exclude each other (projections are not exported as DICOM)');
  if (!a.options.dicom) checkOutputs([['to', out]]);
  if (a.options.scan) return exportScan(path, out, a);
  if (a.options.dicom) return exportDicom(path, out, a);
  if (a.options.description !== undefined) throw new InputError('option --description: only with --dicom');
  for (const k of ['geometry', 'flat', 'dark', 'i0']) if (a.options[k] !== undefined) throw new InputError(`option --${k} applies to scans: add --scan`);
  if (a.options.hu && a.options.mu) throw new InputError('options --hu and --mu exclude each other');
  const format = formatFromName(out);
  const { volume, warnings } = await readImageFile(gatherFiles(path, 'image'), { maxBytes: memoryLimit(a) });
  const mw = a.options['mu-water'];
  if (mw !== undefined) volume.muWater = checkMuWater(mw, 'option --mu-water');
  if (volume.nz > 1 && a.options.slice === undefined) throw new InputError(`export: the ${volume.format} data hold ${volume.nz} slices; choose one with --slice (0 to ${volume.nz - 1})`);
  const image = volumeSlice(volume, (a.options.slice as number | undefined) ?? 0);
  const win = a.options.window, level = a.options.level;
  if ((win === undefined) !== (level === undefined)) throw new InputError('options --window and --level go together (width and centre)');
  if (format !== 'png' && win !== undefined) throw new InputError('options --window and --level apply to PNG output');
  const w = await writeImageFile(image, out, {
    format, quantity: a.options.hu ? 'hu' : a.options.mu ? 'mu' : undefined, sampleType: a.options.int16 ? 'int16' : 'float32',
    window: win !== undefined ? { width: win as number, level: level as number } : undefined, compress: Boolean(a.options.compress),
  });
  const writes = new PendingWrites();
  const names = w.files.map((f) => join(dirname(out), f.name));
  w.files.forEach((f, i) => { writes.add(names[i], f.bytes); });
  const replaced = replacedWarnings(writes.commit());
  const g = image.grid;
  return {
    json: { written: names, from: volume.format, nx: g.nx, ny: g.ny, pixelMm: [g.dx, g.dy], clamped: w.clamped },
    text: `wrote ${names.join(' and ')}: ${g.nx} x ${g.ny} pixels from ${volume.format}`,
    warnings: [...warnings, ...w.warnings, ...replaced],
  };
}
