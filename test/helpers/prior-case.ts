// The prior-guided case the tests of iterative/prior*.test.ts share: the thorax demo phantom
// truncated to about 60% of its width (preset "demo", 345 of 1100 channels, 180 views, photon
// noise), a prior that is the phantom outside the FOV and water inside, and the result from it.
import type { LocalWorkspace } from '../../web/core/engine/local-workspace';
import { cropDetector, presetGeometry } from '../../web/core/geometry/presets';
import { fovRadius } from '../../web/core/geometry/view-vectors';
import { squareGrid } from '../../web/core/image';
import { circleMask } from '../../web/core/metrics';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { thorax } from '../../web/core/phantoms/thorax';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe, type RecipeResult } from '../../web/core/recipe/run';
import type { Scan } from '../../web/core/scan';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { addPhotonNoise } from '../../web/core/simulate/noise';
import { localWorkspace } from './engine';

export const VIEWS = 180;
export const N = 160;
export const PIXEL = 3.6; // 576 mm: the whole phantom with its arms (radius 282 mm)
export const grid = squareGrid(N, PIXEL);
export const phantom = thorax();
export const truth = rasterize(phantom, grid, 4);

export interface PriorCase {
  ws: LocalWorkspace;
  scan: Scan;
  fov: number;
  insideFov: Uint8Array;
  outsideFov: Uint8Array;
  basePrior: Float32Array;
  base: RecipeResult;
  /** The prior-guided method from `prior` (mu on `grid`). */
  runPrior(prior: Float32Array): Promise<RecipeResult>;
}

function truncatedScan(): Scan {
  const full = { ...presetGeometry('demo')!, anglesDeg: { start: 0, step: 360 / VIEWS, count: VIEWS } };
  const { geometry, first } = cropDetector(full, 345);
  const all = analyticSinogram(phantom, full);
  const nF = full.detector.channels, n = geometry.detector.channels;
  const data = new Float32Array(VIEWS * n);
  for (let v = 0; v < VIEWS; v++) data.set(all.subarray(v * nF + first, v * nF + first + n), v * n);
  addPhotonNoise(data, 2e5, 5);
  return { geometry, data, muWater: phantom.muWater };
}

/** Builds the case and runs the method once from the base prior. */
export async function priorCase(): Promise<PriorCase> {
  const ws = await localWorkspace();
  const scan = truncatedScan();
  const fov = fovRadius(scan.geometry);
  const insideFov = circleMask(grid, fov);
  const support = circleMask(grid, (N * PIXEL) / 2);
  const outsideFov = support.map((v, i) => (v && !insideFov[i] ? 1 : 0));
  const basePrior = truth.map((v, i) => (insideFov[i] ? phantom.muWater : v));
  const runPrior = (prior: Float32Array) =>
    runRecipe(ws, scan, validateRecipe({ method: 'prior', prior: { source: 'image' }, grid: { size: N, pixel: PIXEL } }), {}, {
      prior: { grid, data: prior, quantity: 'mu' },
    });
  return { ws, scan, fov, insideFov, outsideFov, basePrior, base: await runPrior(basePrior), runPrior };
}
