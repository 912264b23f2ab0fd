// The built-in demo: a truncated fan-beam scan of the thorax phantom (detector covering about
// 60% of the body width) with photon noise, and the phantom on a 576 x 576 grid of 1 mm pixels
// as ground truth. The same scan as `rimfill simulate --phantom thorax --geometry demo
// --channels 345 --photons 200000 --seed 7 --truth t.nrrd --size 576 --pixel 1` (the CLI demo),
// computed in slices so that progress shows and a cancel is heard.
import { throwIfCancelled } from '../core/errors';
import { cropDetector, presetGeometry } from '../core/geometry/presets';
import type { Geometry } from '../core/geometry/types';
import { fovRadius } from '../core/geometry/view-vectors';
import { squareGrid, type ImageGrid } from '../core/image';
import { rasterize } from '../core/phantoms/ellipse';
import { thorax } from '../core/phantoms/thorax';
import type { RunHooks } from '../core/run-hooks';
import type { Scan } from '../core/scan';
import { analyticSinogram } from '../core/simulate/analytic';
import { addPhotonNoise } from '../core/simulate/noise';
import type { StoredImage } from '../store/records';

/** Settings of the demo scan (see the file comment). */
export const DEMO = { preset: 'demo', channels: 345, photons: 200_000, seed: 7, truthSize: 576, truthPixel: 1, truthSubsamples: 4 };

export type DemoSettings = typeof DEMO;

export const DEMO_NAME = 'Demo: thorax phantom, truncated fan-beam scan';

const yieldToEvents = () => new Promise<void>((r) => setTimeout(r, 0));

/** Simulates the demo scan and its ground truth. */
export async function buildDemoScan(hooks: RunHooks = {}, settings: DemoSettings = DEMO): Promise<{ scan: Scan; reference: StoredImage }> {
  const full = presetGeometry(settings.preset)!;
  const phantom = thorax();
  const a = full.anglesDeg as { start: number; step: number; count: number };
  const nFull = full.detector.channels;
  const data = new Float32Array(a.count * nFull);
  const chunk = 60;
  for (let v0 = 0; v0 < a.count; v0 += chunk) {
    throwIfCancelled(hooks.signal);
    const count = Math.min(chunk, a.count - v0);
    const part: Geometry = { ...full, anglesDeg: { start: a.start + v0 * a.step, step: a.step, count } };
    data.set(analyticSinogram(phantom, part), v0 * nFull);
    hooks.onProgress?.((0.2 * (v0 + count)) / a.count, 'projections');
    await yieldToEvents();
  }
  addPhotonNoise(data, settings.photons, settings.seed);
  const crop = cropDetector(full, settings.channels);
  const n = crop.geometry.detector.channels;
  const cut = new Float32Array(a.count * n);
  for (let v = 0; v < a.count; v++) cut.set(data.subarray(v * nFull + crop.first, v * nFull + crop.first + n), v * n);
  hooks.onProgress?.(0.25, 'projections');

  const grid = squareGrid(settings.truthSize, settings.truthPixel);
  const truth = new Float32Array(grid.nx * grid.ny);
  const band = 24;
  for (let j0 = 0; j0 < grid.ny; j0 += band) {
    throwIfCancelled(hooks.signal);
    const rows = Math.min(band, grid.ny - j0);
    truth.set(rasterize(phantom, bandGrid(grid, j0, rows), settings.truthSubsamples), j0 * grid.nx);
    hooks.onProgress?.(0.25 + (0.75 * (j0 + rows)) / grid.ny, 'ground truth');
    await yieldToEvents();
  }
  const notes = { phantom: 'thorax', photons: String(settings.photons), seed: String(settings.seed), truncatedFrom: `${nFull} channels` };
  return {
    scan: { geometry: crop.geometry, data: cut, muWater: phantom.muWater, notes },
    reference: { grid, data: truth, muWater: phantom.muWater, fovRadius: fovRadius(crop.geometry) },
  };
}

/** Rows [j0, j0 + rows) of a grid, as a grid of their own (same pixel centres). */
function bandGrid(g: ImageGrid, j0: number, rows: number): ImageGrid {
  return { ...g, ny: rows, cy: g.cy + (j0 - (g.ny - 1) / 2 + (rows - 1) / 2) * g.dy };
}
