// rimfill calibrate: measures mu_water from a region of a reconstructed image that the user
// marks as water (or as a material of known HU) and, given a scan, stores it with the scan.
import { InputError } from '../../core/errors';
import { writeScanNrrd } from '../../core/formats/scan-nrrd';
import { measureMuWater, type Region } from '../../core/preprocess/hu-calibration';
import { parseArgs, requireString } from '../args';
import { checkOutputs, PendingWrites, replacedWarnings } from '../io';
import { loadImage, loadScanWithReport, SCAN_INPUT_OPTIONS } from '../load';
import type { CommandResult } from './types';

export const calibrateHelp = `rimfill calibrate image.nrrd (--circle x,y,r | --rectangle x0,y0,x1,y1) [--material-hu H]
    [--scan scan --out calibrated.nrrd] [--json]
  Measures mu_water (1/mm) as the mean of a region of a mu image (mm; H = 0 for water, e.g. 40
  for soft tissue: mu_water = mean / (1 + H/1000)). With --scan, writes that scan with the
  measured mu_water to --out, so every later HU figure uses it.`;

function numbersOption(text: string, n: number, name: string): number[] {
  const v = text.split(',').map(Number);
  if (v.length !== n || v.some((x) => !Number.isFinite(x) || text.trim() === '')) throw new InputError(`option --${name}: got "${text}", expected ${n} numbers in mm separated by commas`);
  return v;
}

export async function calibrate(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, { circle: 'string', rectangle: 'string', 'material-hu': 'number', scan: 'string', out: 'string', json: 'flag', ...SCAN_INPUT_OPTIONS }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('calibrate: give the image, e.g. rimfill calibrate image.nrrd --circle 0,0,30');
  let region: Region;
  if (typeof a.options.circle === 'string' && a.options.rectangle === undefined) {
    const [cx, cy, radius] = numbersOption(a.options.circle, 3, 'circle');
    if (!(radius > 0)) throw new InputError(`option --circle: radius ${radius}, expected a positive radius in mm`);
    region = { shape: 'circle', cx, cy, radius };
  } else if (typeof a.options.rectangle === 'string' && a.options.circle === undefined) {
    const [x0, y0, x1, y1] = numbersOption(a.options.rectangle, 4, 'rectangle');
    region = { shape: 'rectangle', x0, y0, x1, y1 };
  } else throw new InputError('calibrate: mark one region, with --circle x,y,r or --rectangle x0,y0,x1,y1 (mm)');
  if ((a.options.scan === undefined) !== (a.options.out === undefined)) throw new InputError('options --scan and --out go together');
  checkOutputs([['out', a.options.out as string | undefined]]);
  const image = await loadImage(path, 'image');
  const m = measureMuWater(image, region, (a.options['material-hu'] as number | undefined) ?? 0);
  const text = [`mu_water = ${m.muWater.toPrecision(6)} /mm from ${m.pixels} pixels (standard deviation ${m.stdHu.toFixed(1)} HU)`];
  const writes = new PendingWrites();
  if (a.options.scan) {
    const r = await loadScanWithReport(a.options.scan as string, a);
    writes.add(requireString(a, 'out'), await writeScanNrrd({ ...r.scan, muWater: m.muWater }));
    text.push(`wrote ${a.options.out} with this mu_water`);
  }
  const warnings = replacedWarnings(writes.commit());
  return { json: { ...m, region, out: a.options.out ?? null }, text: text.join('\n'), warnings };
}
