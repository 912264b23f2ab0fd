// Where a prior image comes from on the command line: a user's network (--model net.onnx
// --model-info net.json, run on the scan) or an image file (--prior image.nrrd). Shared by
// `rimfill prior-check` and, once the prior-guided method lands, `rimfill reconstruct --method prior`.
import type { Workspace } from '../core/engine/workspace';
import { InputError } from '../core/errors';
import type { Image2D, ImageGrid } from '../core/image';
import { importModel, parseModelInfoText, type ImportedModel } from '../core/model/import-model';
import { networkPrior, type NetworkPriorResult } from '../core/model/network-prior';
import { runRecipe } from '../core/recipe/run';
import type { RunHooks } from '../core/run-hooks';
import type { Scan } from '../core/scan';
import type { OptionType, ParsedArgs } from './args';
import { readBytes } from './io';
import { loadImage } from './load';
import { openNetworkNode } from './ort-node';

/** The options this helper reads (merge into a command's option spec). */
export const PRIOR_OPTIONS: Record<string, OptionType> = { model: 'string', 'model-info': 'string', prior: 'string' };

export interface PriorSource {
  /** The prior on the reconstruction grid (network) or on its own grid (image file), mu. */
  prior: Image2D;
  /** For a network: its input, output and report. */
  network?: NetworkPriorResult;
  model?: ImportedModel['info'];
  warnings: string[];
}

/** Reads and validates --model and --model-info (InputError naming the option otherwise). */
export async function loadNetworkModel(modelPath: string, infoPath: string): Promise<ImportedModel> {
  const text = new TextDecoder().decode(readBytes(infoPath, 'model description'));
  const description = parseModelInfoText(text);
  return importModel(readBytes(modelPath, 'model'), description, openNetworkNode);
}

/** True when the options name a prior (either form). */
export function hasPriorOptions(a: ParsedArgs): boolean {
  return a.options.model !== undefined || a.options['model-info'] !== undefined || a.options.prior !== undefined;
}

/**
 * The prior the options describe. A network runs on `scan` (its input reconstructed with
 * runRecipe on `ws`) and its output is resampled onto `grid`; an image file is read as it is.
 */
export async function resolvePrior(a: ParsedArgs, ws: Workspace, scan: Scan, grid: ImageGrid, hooks: RunHooks = {}): Promise<PriorSource> {
  const model = a.options.model as string | undefined;
  const info = a.options['model-info'] as string | undefined;
  const image = a.options.prior as string | undefined;
  if (image !== undefined && (model !== undefined || info !== undefined)) {
    throw new InputError('options --prior and --model/--model-info exclude each other: give an image or a network');
  }
  if (image !== undefined) return { prior: await loadImage(image, 'prior', scan.muWater), warnings: [] };
  if (model === undefined || info === undefined) {
    throw new InputError('a prior needs --prior image.nrrd, or --model net.onnx with --model-info net.json (both)');
  }
  const imported = await loadNetworkModel(model, info);
  try {
    const result = await networkPrior(scan, imported.info, imported.runner, grid, (recipe, h) => runRecipe(ws, scan, recipe, h), hooks);
    return { prior: result.prior, network: result, model: imported.info, warnings: [...imported.warnings, ...result.warnings] };
  } finally {
    await imported.runner.dispose();
  }
}
