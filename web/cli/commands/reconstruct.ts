// rimfill reconstruct: a scan file in, an image file out.
import { InputError } from '../../core/errors';
import { writeImageNrrd } from '../../core/formats/image-nrrd';
import { muToHu } from '../../core/image';
import { METHODS, validateRecipe } from '../../core/recipe/recipe';
import { runRecipe } from '../../core/recipe/run';
import { parseArgs, requireString, type ParsedArgs } from '../args';
import { PendingWrites } from '../io';
import { loadScanWithReport, SCAN_INPUT_HELP, SCAN_INPUT_OPTIONS } from '../load';
import { openWorkspace } from '../engine-node';
import { progressLine } from '../progress';
import type { CommandResult } from './types';

export const reconstructHelp = `rimfill reconstruct <scan file or folder> --method ${METHODS.join('|')} --out image.nrrd
    [--filter ram-lak|shepp-logan|cosine|hamming|hann] [--cutoff 0..1] [--size N] [--pixel mm]
    [--hu] [--workers N] [--json]
${SCAN_INPUT_HELP}
  Reconstructs a 2D scan onto an N x N grid of --pixel mm centred on the isocentre (default:
  512 pixels covering the measured field of view). --hu writes HU (needs mu_water in the scan).`;

/** Recipe fields and the options that set them, so errors speak of what the user typed. */
const FIELD_OPTIONS: Record<string, string> = { method: 'method', filter: 'filter', cutoff: 'cutoff', 'grid.size': 'size', 'grid.pixel': 'pixel' };

function asOptionError(err: unknown): unknown {
  if (!(err instanceof InputError)) return err;
  const m = /^recipe ([\w.]+): (.*)$/s.exec(err.message);
  const option = m && FIELD_OPTIONS[m[1]];
  return option ? new InputError(`option --${option}: ${m[2]}`) : err;
}

/** The recipe the options describe (validated). */
export function recipeFromArgs(a: ParsedArgs): ReturnType<typeof validateRecipe> {
  const o = a.options;
  const raw: Record<string, unknown> = { method: requireString(a, 'method') };
  if (o.filter !== undefined) raw.filter = o.filter;
  if (o.cutoff !== undefined) raw.cutoff = o.cutoff;
  if (o.size !== undefined || o.pixel !== undefined) {
    if (o.size === undefined || o.pixel === undefined) throw new InputError('options --size and --pixel go together (pixels and mm per pixel)');
    raw.grid = { size: o.size, pixel: o.pixel };
  }
  try {
    return validateRecipe(raw);
  } catch (err) {
    throw asOptionError(err);
  }
}

export async function reconstruct(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, {
    method: 'string', out: 'string', filter: 'string', cutoff: 'number', size: 'int', pixel: 'number',
    hu: 'flag', workers: 'int', json: 'flag', ...SCAN_INPUT_OPTIONS,
  }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('reconstruct: give the scan file, e.g. rimfill reconstruct scan.nrrd --method fbp --out image.nrrd');
  const recipe = recipeFromArgs(a);
  const out = requireString(a, 'out');
  const { scan, warnings: readWarnings } = await loadScanWithReport(path, a);
  if (a.options.hu && !scan.muWater) throw new InputError('option --hu: the scan has no mu_water (rimfill.muWater); give --mu-water or write mu');
  const ws = await openWorkspace(a.options.workers as number | undefined);
  try {
    const t0 = performance.now();
    const r = await runRecipe(ws, scan, recipe, { onProgress: a.options.json ? undefined : progressLine(recipe.method) });
    const seconds = (performance.now() - t0) / 1000;
    const image = r.image;
    const written = a.options.hu ? { ...image, data: muToHu(image.data, scan.muWater!), quantity: 'hu' as const } : image;
    const writes = new PendingWrites();
    writes.add(out, await writeImageNrrd(written));
    writes.commit();
    const g = image.grid;
    return {
      json: { out, recipe, grid: g, fovRadiusMm: image.fovRadius, seconds, report: r.report, warnings: r.warnings },
      text: `wrote ${out}: ${g.nx} x ${g.ny} pixels of ${g.dx.toFixed(3)} mm, ${recipe.method} in ${seconds.toFixed(2)} s`,
      warnings: [...readWarnings, ...r.warnings],
    };
  } finally {
    ws.dispose();
  }
}
