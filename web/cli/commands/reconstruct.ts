// rimfill reconstruct: a scan file in, an image file out.
import { InputError } from '../../core/errors';
import { writeImageNrrd } from '../../core/formats/image-nrrd';
import { muToHu } from '../../core/image';
import { METHODS, validateRecipe } from '../../core/recipe/recipe';
import { runRecipe, type RecipeInputs } from '../../core/recipe/run';
import { isIterativeMethod, ITERATIVE_METHODS } from '../../core/iterative/options';
import { parseArgs, requireString, type ParsedArgs } from '../args';
import { PendingWrites } from '../io';
import { loadImage, loadScan } from '../load';
import { openWorkspace } from '../engine-node';
import { progressLine } from '../progress';
import type { CommandResult } from './types';

export const reconstructHelp = `rimfill reconstruct scan.nrrd --method ${METHODS.join('|')} --out image.nrrd
    [--filter ram-lak|shepp-logan|cosine|hamming|hann] [--cutoff 0..1] [--size N] [--pixel mm]
    [--hu] [--geometry geom.json] [--workers N] [--json]
    iterative methods (sart, tv, wtv, prior):
    [--iterations K] [--subsets N] [--relaxation 0..2] [--tolerance fraction]
    [--tv-strength A] [--tv-steps N] [--tv-eps 1/mm] [--support circle|grid|mask.nrrd] [--allow-negative]
    [--prior image.nrrd|METHOD] [--prior-weight 0..1]
  Reconstructs a 2D scan onto an N x N grid of --pixel mm centred on the isocentre (default:
  512 pixels covering the measured field of view). --hu writes HU (needs mu_water in the scan).
  sart: ordered-subsets SART on the measured channels; tv, wtv: plus (reweighted) total
  variation (ASD-POCS); prior: measured channels fitted to the data, the channels beyond the
  detector to the projections of --prior (an image of the same object, any grid; or a method,
  e.g. fbp, whose result on this scan with the same options is the prior), starting from the
  prior (default grid: the prior's extent). --json reports the residual and TV per iteration,
  the residual per view and how far the result departs from the prior.`;

/** Iterative options: CLI name -> recipe field. */
const ITERATIVE_OPTIONS: Record<string, string> = {
  iterations: 'iterations', subsets: 'subsets', relaxation: 'relaxation', tolerance: 'tolerance',
  'tv-strength': 'tvStrength', 'tv-steps': 'tvSteps', 'tv-eps': 'tvEps', 'prior-weight': 'priorWeight', support: 'support',
};

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
  const iterative = isIterativeMethod(raw.method as string);
  for (const [name, field] of Object.entries(ITERATIVE_OPTIONS)) {
    if (o[name] === undefined) continue;
    if (!iterative) throw new InputError(`option --${name}: only for the iterative methods (${ITERATIVE_METHODS.join(', ')}), not --method ${raw.method}`);
    raw[field] = o[name];
  }
  if (typeof raw.support === 'string' && /\.nrrd$/i.test(raw.support)) raw.support = 'image';
  if (o['allow-negative']) {
    if (!iterative) throw new InputError(`option --allow-negative: only for the iterative methods (${ITERATIVE_METHODS.join(', ')})`);
    raw.nonNegative = false;
  }
  if (typeof o.prior === 'string') {
    if (raw.method !== 'prior') throw new InputError(`option --prior: only for --method prior, not --method ${raw.method}`);
    // A file: the image comes with the run; a method name: that recipe's result on this scan,
    // with the same filter, grid and other reconstruction options.
    const { method: _m, ...rest } = raw;
    raw.prior = /\.nrrd$/i.test(o.prior) ? { source: 'image' } : { source: 'recipe', recipe: { ...withoutIterative(rest), method: o.prior } };
  } else if (raw.method === 'prior') {
    throw new InputError('option --prior is required for --method prior: an image file (.nrrd) of the same object, or a method such as fbp');
  }
  return validateRecipe(raw);
}

/** A raw recipe without the iterative fields (for the recipe of a prior). */
function withoutIterative(raw: Record<string, unknown>): Record<string, unknown> {
  const out = { ...raw };
  for (const field of [...Object.values(ITERATIVE_OPTIONS), 'nonNegative']) delete out[field];
  return out;
}

export async function reconstruct(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, {
    method: 'string', out: 'string', filter: 'string', cutoff: 'number', size: 'int', pixel: 'number',
    hu: 'flag', geometry: 'string', workers: 'int', json: 'flag',
    iterations: 'int', subsets: 'int', relaxation: 'number', tolerance: 'number', 'tv-strength': 'number', 'tv-steps': 'int',
    'tv-eps': 'number', 'prior-weight': 'number', support: 'string', 'allow-negative': 'flag', prior: 'string',
  }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('reconstruct: give the scan file, e.g. rimfill reconstruct scan.nrrd --method fbp --out image.nrrd');
  const recipe = recipeFromArgs(a);
  const out = requireString(a, 'out');
  const scan = await loadScan(path, a.options.geometry as string | undefined);
  if (a.options.hu && !scan.muWater) throw new InputError('option --hu: the scan has no mu_water (rimfill.muWater); write mu instead');
  const inputs: RecipeInputs = {};
  if (recipe.prior?.source === 'image') inputs.prior = await loadImage(a.options.prior as string, 'prior', scan.muWater);
  if (recipe.support === 'image') inputs.supportMask = await loadImage(a.options.support as string, 'support mask', scan.muWater);
  const ws = await openWorkspace(a.options.workers as number | undefined);
  try {
    const t0 = performance.now();
    const r = await runRecipe(ws, scan, recipe, { onProgress: a.options.json ? undefined : progressLine(recipe.method) }, inputs);
    const seconds = (performance.now() - t0) / 1000;
    const image = r.image;
    const written = a.options.hu ? { ...image, data: muToHu(image.data, scan.muWater!), quantity: 'hu' as const } : image;
    const writes = new PendingWrites();
    writes.add(out, await writeImageNrrd(written));
    writes.commit();
    const g = image.grid;
    return {
      json: { out, recipe, grid: g, fovRadiusMm: image.fovRadius, seconds, report: r.report, warnings: r.warnings },
      text: `wrote ${out}: ${g.nx} x ${g.ny} pixels of ${g.dx.toFixed(3)} mm, ${recipe.method} in ${seconds.toFixed(2)} s${iterationSummary(r.report)}`,
      warnings: r.warnings,
    };
  } finally {
    ws.dispose();
  }
}

/** ", 20 iterations, measured-data residual 3.1% of its start" for iterative reports. */
function iterationSummary(report: Record<string, unknown>): string {
  const residual = report.residual as { finalRelative?: number } | undefined;
  if (typeof report.iterations !== 'number' || residual?.finalRelative === undefined) return '';
  return `, ${report.iterations} iterations (stopped by ${report.stoppedBy}), measured-data residual ${(100 * residual.finalRelative).toFixed(2)}% of its start`;
}
