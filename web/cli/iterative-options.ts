// The iterative methods' options of `rimfill reconstruct` (sart, tv, wtv, prior): option spec,
// help text, recipe fields they set, and the images they name (prior, support mask, network).
import { existsSync } from 'node:fs';
import { InputError } from '../core/errors';
import { isIterativeMethod, ITERATIVE_METHODS } from '../core/iterative/options';
import { chooseGrid } from '../core/recipe/grid';
import { METHODS, type Recipe } from '../core/recipe/recipe';
import type { RecipeInputs } from '../core/recipe/run';
import type { RunHooks } from '../core/run-hooks';
import type { Scan } from '../core/scan';
import type { Workspace } from '../core/engine/workspace';
import type { Image2D } from '../core/image';
import type { OptionType, ParsedArgs } from './args';
import { loadImage, loadVolume } from './load';
import { hasPriorOptions, PRIOR_OPTIONS, resolvePrior } from './prior-source';

/** Option name -> recipe field. */
export const ITERATIVE_FIELD_OPTIONS: Record<string, string> = {
  iterations: 'iterations', subsets: 'subsets', relaxation: 'relaxation', tolerance: 'tolerance',
  'tv-strength': 'tvStrength', 'tv-steps': 'tvSteps', 'tv-eps': 'tvEps', 'prior-weight': 'priorWeight', support: 'support',
};

export const ITERATIVE_OPTIONS: Record<string, OptionType> = {
  iterations: 'int', subsets: 'int', relaxation: 'number', tolerance: 'number', 'tv-strength': 'number', 'tv-steps': 'int',
  'tv-eps': 'number', 'prior-weight': 'number', support: 'string', 'allow-negative': 'flag', ...PRIOR_OPTIONS,
};

export const ITERATIVE_HELP = `    iterative methods (${ITERATIVE_METHODS.join(', ')}):
    [--iterations K] [--subsets N] [--relaxation 0..2] [--tolerance fraction]
    [--tv-strength A] [--tv-steps N] [--tv-eps 1/mm] [--support disk|grid|mask.nrrd] [--allow-negative]
    [--prior FILE|METHOD | --model net.onnx --model-info net.json] [--prior-weight 0..1]
  sart: ordered-subsets SART on the measured channels; tv, wtv: plus (reweighted) total
  variation (ASD-POCS). prior: the measured channels are fitted to the data, the channels beyond
  the detector to the projections of the prior, starting from it, with reweighted TV. The prior
  is an image of the same object (any grid and image format; for a cone-beam scan a volume,
  resampled), a method whose result on this scan is the prior (e.g. fbp with --extend mirror),
  or a user's network (--model, 2D scans); without one, FBP (FDK) of the scan with water-
  cylinder extension. Default grid: the prior's extent (2D image), else as for fbp. --json
  reports residual and TV per iteration, the residual per view, and how far the result departs
  from the prior inside and outside the FOV.`;

/**
 * Sets the iterative fields of `raw` from the options (InputError for options the method does
 * not take). For --method prior, --prior METHOD becomes the prior's recipe: this method with
 * the reconstruction options given (--filter, --extend, ...); --extend then belongs to it.
 */
export function addIterativeFields(raw: Record<string, unknown>, a: ParsedArgs): void {
  const o = a.options;
  const iterative = isIterativeMethod(raw.method as string);
  const only = (name: string) => new InputError(`option --${name}: only for the iterative methods (${ITERATIVE_METHODS.join(', ')}), not --method ${raw.method}`);
  for (const [name, field] of Object.entries(ITERATIVE_FIELD_OPTIONS)) {
    if (o[name] === undefined) continue;
    if (!iterative) throw only(name);
    raw[field] = o[name];
  }
  if (typeof raw.support === 'string') {
    if (/\.nrrd$/i.test(raw.support)) raw.support = 'image';
    else if (raw.support !== 'disk' && raw.support !== 'grid') throw new InputError(`option --support: got "${raw.support}", expected disk, grid or a mask image (.nrrd)`);
  }
  if (o['allow-negative']) {
    if (!iterative) throw only('allow-negative');
    raw.nonNegative = false;
  }
  if (raw.method !== 'prior') {
    if (hasPriorOptions(a)) throw new InputError(`options --prior, --model, --model-info: only for --method prior, not --method ${raw.method}`);
    return;
  }
  const prior = o.prior as string | undefined;
  const methods: string[] = METHODS.filter((m) => m !== 'prior');
  if (prior !== undefined && !methods.includes(prior) && !existsSync(prior)) {
    throw new InputError(`option --prior: got "${prior}", expected an image file or folder that exists, or a method (${methods.join(', ')})`);
  }
  if (prior !== undefined && methods.includes(prior) && o.model === undefined && o['model-info'] === undefined) {
    const { method: _method, ...rest } = raw;
    for (const field of [...Object.values(ITERATIVE_FIELD_OPTIONS), 'nonNegative']) delete rest[field];
    raw.prior = { source: 'recipe', recipe: { ...rest, method: prior } };
    delete raw.extend;
  } else if (hasPriorOptions(a)) {
    raw.prior = { source: 'image' };
  }
}

/** Images the recipe needs besides the scan: a prior (file or network) and a support mask. */
export async function iterativeInputs(
  recipe: Recipe, a: ParsedArgs, ws: Workspace, scan: Scan, hooks: RunHooks,
): Promise<{ inputs: RecipeInputs; warnings: string[]; priorReport?: Record<string, unknown>; checkedPrior?: Image2D }> {
  const inputs: RecipeInputs = {};
  const warnings: string[] = [];
  let priorReport: Record<string, unknown> | undefined;
  /** The prior as checked against the data: a network's output on its own grid, or the image. */
  let checkedPrior: Image2D | undefined;
  if (recipe.prior?.source === 'image' && scan.geometry.kind === 'cone') {
    if (a.options.model !== undefined || a.options['model-info'] !== undefined) {
      throw new InputError('options --model, --model-info: the network prior works on 2D scans; for a cone-beam scan give --prior with a volume file or a method');
    }
    const v = await loadVolume(a.options.prior as string, 'prior', scan.muWater, a);
    inputs.priorVolume = v.volume;
    warnings.push(...v.warnings);
    priorReport = { source: 'image', path: a.options.prior };
  } else if (recipe.prior?.source === 'image') {
    // A network's prior is made on the grid the reconstruction will use.
    const grid = chooseGrid(scan, recipe.grid);
    const p = await resolvePrior(a, ws, scan, grid, hooks);
    inputs.prior = p.prior;
    checkedPrior = p.network?.output ?? p.prior;
    warnings.push(...p.warnings);
    if (p.network) priorReport = { source: 'network', model: p.model, ...p.network.report };
    else priorReport = { source: 'image', path: a.options.prior };
  }
  if (recipe.support === 'image') inputs.supportMask = await loadImage(a.options.support as string, 'support mask', scan.muWater);
  return { inputs, warnings, priorReport, checkedPrior };
}

/** ", 20 iterations (stopped by iterations), measured-data residual 3.1% of its start" for iterative reports. */
export function iterationSummary(report: Record<string, unknown>): string {
  const residual = report.residual as { finalRelative?: number } | undefined;
  if (typeof report.iterations !== 'number' || residual?.finalRelative === undefined) return '';
  return `, ${report.iterations} iterations (stopped by ${report.stoppedBy}), measured-data residual ${(100 * residual.finalRelative).toFixed(2)}% of its start`;
}
