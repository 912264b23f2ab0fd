// Filtered backprojection for 2D parallel and fan-beam scans (flat or equiangular detector):
// pre-weighting (angular step, redundancy, cosine), FFT ramp filtering with zero padding, and
// pixel-driven backprojection with distance weights (Kak & Slaney 1988, ch. 3).
import type { Buf, Workspace } from '../engine/workspace';
import { throwIfCancelled } from '../errors';
import { extendDetector } from '../geometry/presets';
import { firstChannelU, kernelKind, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import { checkGrid, gridOrigin, type Image2D, type ImageGrid } from '../image';
import type { Scan } from '../scan';
import { fbpPreweights } from './fbp-weights';
import { checkFilter, type FilterWindow } from './filter-design';
import { bandEdge, prepareFilter } from './filter-response';
import { require2d, requireGridInsideSourceCircle } from './projector';
import { splitRange } from './split';
import type { RunHooks } from '../run-hooks';
import { zeroExtension, type DetectorExtension } from '../truncation/extension-plan';
import { runExtension } from '../truncation/extend-scan';

export interface FbpParams {
  grid: ImageGrid;
  filter?: FilterWindow;
  /** Band limit of the filter window, line pairs per cm at the isocentre; absent: the full band. */
  bandLimit?: number;
  /**
   * Detector extension applied before filtering (truncation/extension-plan.ts planExtension).
   * Absent: zero channels where a displaced detector needs them (zeroExtension), else none.
   */
  extension?: DetectorExtension;
}

export interface FbpResult {
  image: Image2D;
  warnings: string[];
  /** Seconds spent per stage. */
  timings: { weights: number; filter: number; backproject: number; extend?: number };
}

const now = () => performance.now() / 1000;

/** FBP of a 2D scan onto params.grid. Values in the scan's units per mm (mu for line integrals). */
export async function fbp2d(ws: Workspace, scan: Scan, params: FbpParams, hooks: RunHooks = {}): Promise<FbpResult> {
  const g = scan.geometry;
  require2d(g);
  const grid = checkGrid(params.grid);
  requireGridInsideSourceCircle(g, grid);
  const window = checkFilter(params.filter ?? 'ramp', params.bandLimit);
  const band = bandEdge(g, params.bandLimit);
  const ext = params.extension ?? zeroExtension(scan);
  // With an extension, filtering and backprojection see the extended detector.
  const ge = ext ? extendDetector(g, ext.left, ext.right) : g;
  const t0 = now();
  // Weights for the extended channels; the measured detector (g) sets the redundancy.
  const pre = fbpPreweights(g, ge.detector.channels, firstChannelU(ge), true);
  const t1 = now();
  throwIfCancelled(hooks.signal);
  ws.reset();
  const f = await filterStage(ws, scan, ge, ext, pre, window, band.edge);
  const t2 = now();
  hooks.onProgress?.(0.2, 'filter');
  const data = await backprojectStage(ws, f, grid, kernelKind(g), ge, hooks);
  const t3 = now();
  return {
    image: { grid, data, quantity: 'mu', muWater: scan.muWater },
    warnings: band.warning ? [...pre.warnings, band.warning] : pre.warnings,
    timings: { weights: t1 - t0, filter: t2 - t1 - f.tExtend, backproject: t3 - t2, ...(ext ? { extend: f.tExtend } : {}) },
  };
}

/** The filtered views in the workspace, rows of `stride` floats, and the view table. */
interface FilteredViews {
  views: Buf;
  filtered: Buf;
  stride: number;
  nViews: number;
  /** Seconds spent extending the detector. */
  tExtend: number;
}

/** Writes the views, extends the detector (when asked), pre-weights and ramp-filters every view. */
async function filterStage(
  ws: Workspace, scan: Scan, ge: Scan['geometry'], ext: DetectorExtension | undefined,
  pre: ReturnType<typeof fbpPreweights>, window: FilterWindow, bandEdgeFraction: number,
): Promise<FilteredViews> {
  const g = scan.geometry;
  const nCh = ge.detector.channels;
  const table = viewVectors(g);
  const nViews = table.length / VIEW_STRIDE;
  const stride = nCh + 3;
  const views = ws.alloc('views', table.length);
  const sino = ws.alloc('sino', nViews * nCh);
  const w = ws.alloc('weights', pre.weights.length);
  const scale = pre.perView ? ws.alloc('viewScale', nViews) : undefined;
  const filtered = ws.alloc('filtered', nViews * stride);
  // Zero padding: the measured channels must be filtered exactly (linear convolution), which
  // needs nPad >= 2 (max(left, right) + channels - 1) + 1; the tails' outer ends then pick up
  // only wrap-around terms from the far end of the opposite tail, at distances of at least
  // nPad - extended channels, where both the ramp kernel and the tapered data are small
  // (cf. Ohnesorge et al. 2000: extrapolate without lengthening the convolution).
  const padFor = ext ? Math.max(ext.left, ext.right) + g.detector.channels : nCh;
  const filter = await prepareFilter(ws, ge, padFor, window, bandEdgeFraction);
  const res = ws.allocPerWorker('fftRe', filter.nPad);
  const ims = ws.allocPerWorker('fftIm', filter.nPad);
  await ws.write(views, table);
  await ws.write(w, pre.weights);
  if (scale && pre.perView) await ws.write(scale, pre.perView);
  let tExtend = 0;
  if (ext) {
    const te = now();
    const measured = ws.alloc('measured', scan.data.length);
    await ws.write(measured, scan.data);
    await runExtension(ws, ext, measured, sino, nViews, g.detector.channels);
    tExtend = now() - te;
  } else {
    await ws.write(sino, scan.data);
  }
  await ws.run(
    splitRange(nViews, ws.parallelism, 2).map(([a, b], i) => ({
      kernel: 'filterViews' as const,
      args: [sino, nCh, a, b, w, scale ?? 0, filter.response, filter.nPad, filter.twRe, filter.twIm, filter.bitrev, res[i], ims[i], filtered, stride],
      writes: [{ buf: filtered, start: a * stride, length: (b - a) * stride }],
    })),
  );
  return { views, filtered, stride, nViews, tExtend };
}

/** Backprojects the filtered views onto the grid in bands of rows, in chunks of views (progress, cancel). */
async function backprojectStage(ws: Workspace, f: FilteredViews, grid: ImageGrid, kind: number, ge: Scan['geometry'], hooks: RunHooks): Promise<Float32Array> {
  const nxs = (grid.nx + 3) & ~3;
  const img = ws.alloc('image', nxs * grid.ny);
  const { x0, y0 } = gridOrigin(grid);
  const bands = splitRange(grid.ny, ws.parallelism);
  await ws.run(bands.map(([a, b]) => ({ kernel: 'zeroArray' as const, args: [{ ...img, ptr: img.ptr + a * nxs * 4 }, (b - a) * nxs] })));
  const chunks = splitRange(f.nViews, Math.max(1, Math.ceil(f.nViews / 90)));
  const u0 = firstChannelU(ge);
  for (let c = 0; c < chunks.length; c++) {
    throwIfCancelled(hooks.signal);
    const [v0, v1] = chunks[c];
    const last = c === chunks.length - 1;
    await ws.run(
      bands.map(([a, b]) => ({
        kernel: 'backproject2d' as const,
        args: [img, grid.nx, nxs, a, b, grid.dx, grid.dy, x0, y0, f.views, kind, v0, v1, f.filtered, f.stride, ge.detector.channels, u0, ge.detector.pitch[0]],
        writes: last ? [{ buf: img, start: a * nxs, length: (b - a) * nxs }] : [],
      })),
    );
    hooks.onProgress?.(0.2 + (0.8 * (c + 1)) / chunks.length, 'backproject');
  }
  const padded = await ws.read(img);
  const data = new Float32Array(grid.nx * grid.ny);
  for (let j = 0; j < grid.ny; j++) data.set(padded.subarray(j * nxs, j * nxs + grid.nx), j * grid.nx);
  return data;
}
