// The network prior: extension + reconstruction on the model grid -> normalize -> network ->
// de-normalize -> resample onto the reconstruction grid. Its result is a prior image like any
// other (an imported image, another result) for the consistency report and the prior-guided
// data-consistent method.
import { CancelledError, InputError, throwIfCancelled } from '../errors';
import { sameGrid, resampleBilinear } from '../resample';
import type { Image2D, ImageGrid } from '../image';
import type { Recipe } from '../recipe/recipe';
import type { RecipeResult } from '../recipe/run';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import type { ModelInfo } from './description';
import { modelInputGrid, modelOutputGrid } from './model-grid';
import { networkInputRecipe } from './network-input';
import { fromNetworkValues, toNetworkValues } from './normalize';
import type { NetworkRunner, NetworkTensor } from './runner';

/** Runs a recipe on the scan (runRecipe bound to a workspace and the scan). */
export type InputReconstructor = (recipe: Recipe, hooks: RunHooks) => Promise<RecipeResult>;

export interface NetworkPriorResult {
  /** The prior on the reconstruction grid, mu (1/mm); zero where the network's field ends. */
  prior: Image2D;
  /** The network's input before normalization (model grid, mu). */
  input: Image2D;
  /** The network's output after de-normalization (output grid, mu). */
  output: Image2D;
  warnings: string[];
  report: {
    inputRecipe: Recipe;
    inputGrid: ImageGrid;
    outputGrid: ImageGrid;
    /** Share of output pixels with negative attenuation. */
    negativeFraction: number;
    seconds: { input: number; network: number; resample: number };
  };
}

const now = () => performance.now() / 1000;

/** Checks the output tensor's dimensions and values; returns its grid size. */
function checkOutput(out: NetworkTensor, name: string): { nx: number; ny: number } {
  const d = out.dims;
  const count = d.reduce((a, b) => a * b, 1);
  if (d.length !== 4 || d[0] !== 1 || d[1] !== 1 || count !== out.data.length || count === 0) {
    throw new InputError(`network output "${name}": got dimensions [${d.join(', ')}], expected [1, 1, H, W] (one image, one channel)`);
  }
  let bad = 0;
  for (let i = 0; i < out.data.length; i++) if (!Number.isFinite(out.data[i])) bad++;
  if (bad > 0) {
    throw new InputError(`network output "${name}": ${bad} of ${count} values are NaN or infinite; this output cannot serve as a prior`);
  }
  return { nx: d[3], ny: d[2] };
}

/**
 * Makes the network prior for `scan` on `reconGrid`. `reconstruct` makes the network input
 * (normally runRecipe on the same workspace); `runner` runs the model.
 */
export async function networkPrior(
  scan: Scan,
  info: ModelInfo,
  runner: NetworkRunner,
  reconGrid: ImageGrid,
  reconstruct: InputReconstructor,
  hooks: RunHooks = {},
): Promise<NetworkPriorResult> {
  const t0 = now();
  const inputGrid = modelInputGrid(info.input, reconGrid);
  const recipe = networkInputRecipe(info, inputGrid);
  const stage = (a: number, b: number, name: string): RunHooks => ({
    signal: hooks.signal,
    onProgress: (f) => hooks.onProgress?.(a + (b - a) * f, name),
  });
  const made = await reconstruct(recipe, stage(0, 0.4, 'network input'));
  const warnings = [...made.warnings];
  const inputMu = sameGrid(made.image.grid, inputGrid) ? made.image.data : resampleBilinear(made.image.data, made.image.grid, inputGrid);
  const t1 = now();
  throwIfCancelled(hooks.signal);

  hooks.onProgress?.(0.4, 'network');
  const feed = toNetworkValues(inputMu, info.input, scan.muWater);
  const out = await runner.run(info.input.name, info.output.name, { data: feed, dims: [1, 1, inputGrid.ny, inputGrid.nx] }, hooks.signal);
  if (hooks.signal?.aborted) throw new CancelledError();
  const { nx, ny } = checkOutput(out, info.output.name);
  const outputGrid = modelOutputGrid(inputGrid, nx, ny);
  const outputMu = fromNetworkValues(out.data, info.output, scan.muWater);
  const t2 = now();
  hooks.onProgress?.(0.95, 'resample');

  let negative = 0;
  for (let i = 0; i < outputMu.length; i++) if (outputMu[i] < 0) negative++;
  const negativeFraction = negative / outputMu.length;
  if (negativeFraction > 0.01) {
    warnings.push(`network output: ${(100 * negativeFraction).toFixed(1)}% of pixels have negative attenuation`);
  }
  const priorData = sameGrid(outputGrid, reconGrid) ? outputMu : resampleBilinear(outputMu, outputGrid, reconGrid);
  const t3 = now();
  hooks.onProgress?.(1, 'resample');
  const meta = { quantity: 'mu' as const, muWater: scan.muWater, fovRadius: made.image.fovRadius };
  return {
    prior: { ...meta, grid: reconGrid, data: priorData },
    input: { ...meta, grid: inputGrid, data: inputMu },
    output: { ...meta, grid: outputGrid, data: outputMu },
    warnings,
    report: { inputRecipe: recipe, inputGrid, outputGrid, negativeFraction, seconds: { input: t1 - t0, network: t2 - t1, resample: t3 - t2 } },
  };
}
