// FDK reconstruction of circular cone-beam scans with a flat detector (L. A. Feldkamp,
// L. C. Davis, J. W. Kress, "Practical cone-beam algorithm", J. Opt. Soc. Am. A 1(6):612-619,
// 1984; REFERENCES.md [fdk-1984]): cosine pre-weighting, row-wise ramp filtering (the 2D engine's
// windows), Parker weights for short scans, voxel-driven backprojection with bilinear detector
// interpolation, split over z slabs across the workers.
//
// The projections stream through the engine in chunks of views, so engine memory holds the
// volume plus one chunk (not the whole scan). Per chunk:
//   1. write the chunk's rows ((views x detector rows) rows of channels),
//   2. optionally extend every row beyond the detector edges (RowExtension, truncation correction),
//   3. weight and filter the rows (coneFilterViews; workers take views),
//   4. backproject into the volume (backprojectCone; workers take z slabs).
import type { Buf, Workspace } from '../engine/workspace';
import { InputError, throwIfCancelled } from '../errors';
import { coneFovHalfHeight, requireCone } from '../geometry/cone';
import { extendDetector } from '../geometry/presets';
import type { Geometry } from '../geometry/types';
import { firstChannelU, firstRowV, fovRadius, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { checkVolumeGrid, volumeOrigin, withVolumeMemory, type Volume, type VolumeGrid } from '../volume';
import { fbpPreweights } from './fbp-weights';
import { checkFilter, type FilterWindow } from './filter-design';
import { bandEdge, prepareFilter } from './filter-response';
import { requireGridInsideSourceCircle } from './projector';
import { splitRange } from './split';

/**
 * A per-row detector extension (truncation correction) run on each chunk before weighting and
 * filtering. Rows are the chunk's (views x detector rows) rows of channels, view-major.
 */
export interface RowExtension {
  /** Channels added before channel 0 and after the last channel of every row. */
  readonly left: number;
  readonly right: number;
  /** Called once after FDK has laid out its buffers (allocate scratch here). */
  prepare?(ws: Workspace, scan: Scan): Promise<void>;
  /**
   * Fills dst with the extended rows of views [view0, view1): src holds (view1 - view0) x rows
   * rows of `channels` floats, dst the same rows of channels + left + right floats, the
   * measured channels at offset `left`.
   */
  extendRows(ws: Workspace, src: Buf, dst: Buf, view0: number, view1: number): Promise<void>;
}

export interface FdkParams {
  grid: VolumeGrid;
  filter?: FilterWindow;
  /** Band limit of the filter window, line pairs per cm at the isocentre; absent: the full band. */
  bandLimit?: number;
  extension?: RowExtension;
  /** Engine memory for one chunk of filtered views, bytes (default 32 MiB). */
  chunkBytes?: number;
}

export interface FdkResult {
  volume: Volume;
  warnings: string[];
  scanType: 'full' | 'short' | 'limited';
  /** Seconds spent per stage (summed over chunks). */
  timings: { weights: number; filter: number; backproject: number };
}

const now = () => performance.now() / 1000;

/** Throws InputError when the projection array does not match the geometry. */
function checkScanData(scan: Scan, nViews: number): void {
  const d = scan.geometry.detector;
  const want = nViews * d.rows * d.channels;
  if (scan.data.length !== want) {
    throw new InputError(`scan data: got ${scan.data.length} values, expected ${nViews} views x ${d.rows} rows x ${d.channels} channels = ${want}`);
  }
}

/** FDK of a cone-beam scan onto params.grid. Values in the scan's units per mm (mu for line integrals). */
export async function fdk3d(ws: Workspace, scan: Scan, params: FdkParams, hooks: RunHooks = {}): Promise<FdkResult> {
  const g = scan.geometry;
  requireCone(g);
  const grid = checkVolumeGrid(params.grid);
  requireGridInsideSourceCircle(g, grid);
  const window = checkFilter(params.filter ?? 'ramp', params.bandLimit);
  const band = bandEdge(g, params.bandLimit);
  const ext = params.extension;
  const gf = ext ? extendDetector(g, ext.left, ext.right) : g; // the detector the filter sees
  checkScanData(scan, viewVectors(g).length / VIEW_STRIDE);
  const t0 = now();
  const { weights, warnings, scanType } = fbpPreweights(g, gf.detector.channels, firstChannelU(gf)); // g: the measured detector, for redundancy weights
  const timings = { weights: now() - t0, filter: 0, backproject: 0 };
  throwIfCancelled(hooks.signal);
  ws.reset();
  const job = await prepareJob(ws, scan, gf, grid, weights, { ...params, filter: window }, band.edge);
  const chunks = splitRange(job.nViews, Math.ceil(job.nViews / job.chunk));
  for (let c = 0; c < chunks.length; c++) {
    throwIfCancelled(hooks.signal);
    const t = await filterAndBackproject(ws, job, scan, chunks[c], c === chunks.length - 1);
    timings.filter += t.filter;
    timings.backproject += t.backproject;
    hooks.onProgress?.((c + 1) / chunks.length, 'filter + backproject');
  }
  const padded = await ws.read(job.vol);
  const data = new Float32Array(grid.nx * grid.ny * grid.nz);
  for (let r = 0; r < grid.ny * grid.nz; r++) data.set(padded.subarray(r * job.nxs, r * job.nxs + grid.nx), r * grid.nx);
  return {
    volume: { grid, data, quantity: 'mu', muWater: scan.muWater, fovRadius: fovRadius(g), fovHalfHeight: coneFovHalfHeight(g) },
    warnings: band.warning ? [...warnings, band.warning] : warnings,
    scanType,
    timings,
  };
}

/** Everything a chunk of views needs: sizes, the detector the filter sees, buffers, the filter. */
interface FdkJob {
  grid: VolumeGrid;
  ext: RowExtension | undefined;
  nViews: number;
  nCh: number;
  nRows: number;
  nChF: number;
  stride: number;
  blockFloats: number;
  chunk: number;
  nxs: number;
  u0: number;
  v0: number;
  pitchU: number;
  pitchV: number;
  buffers: { views: Buf; viewWeights: Buf; raw: Buf; rows: Buf; filtered: Buf; scratch: Buf[] };
  vol: Buf;
  filter: Awaited<ReturnType<typeof prepareFilter>>;
  fft: { res: Buf[]; ims: Buf[] };
  slabs: Array<[number, number]>;
}

/** Lays out the job's memory, writes the view table and weights, zeroes the volume. */
async function prepareJob(ws: Workspace, scan: Scan, gf: Geometry, grid: VolumeGrid, weights: Float32Array, params: FdkParams & { filter: FilterWindow }, bandEdgeFraction: number): Promise<FdkJob> {
  const g = scan.geometry;
  const ext = params.extension;
  const table = viewVectors(g);
  const nViews = table.length / VIEW_STRIDE;
  const { channels: nCh, rows: nRows } = g.detector;
  const nChF = gf.detector.channels;
  const stride = nChF + 3;
  const blockFloats = (nRows + 3) * stride;
  const chunk = Math.max(ws.parallelism, Math.min(nViews, Math.floor((params.chunkBytes ?? 32 * 2 ** 20) / (blockFloats * 4))));
  const nxs = (grid.nx + 3) & ~3;
  const { vol, ...buffers } = withVolumeMemory(grid, () => {
    const raw = ws.alloc('projChunk', chunk * nRows * nCh);
    return {
      views: ws.alloc('views', table.length),
      viewWeights: ws.alloc('viewWeights', weights.length),
      raw,
      rows: ext ? ws.alloc('extendedChunk', chunk * nRows * nChF) : raw,
      filtered: ws.alloc('filteredChunk', chunk * blockFloats),
      vol: ws.alloc('volume', nxs * grid.ny * grid.nz),
      scratch: ws.allocPerWorker('coneViews', 16 * chunk),
    };
  });
  // Zero padding as in fbp2d: the measured channels filtered exactly (linear convolution).
  const filter = await prepareFilter(ws, gf, ext ? Math.max(ext.left, ext.right) + nCh : nCh, params.filter, bandEdgeFraction);
  const fft = { res: ws.allocPerWorker('fftRe', filter.nPad), ims: ws.allocPerWorker('fftIm', filter.nPad) };
  await ext?.prepare?.(ws, scan);
  await ws.write(buffers.views, table);
  await ws.write(buffers.viewWeights, weights);
  const slabs = splitRange(grid.nz, ws.parallelism);
  const slabFloats = nxs * grid.ny;
  await ws.run(slabs.map(([a, b]) => ({ kernel: 'zeroArray' as const, args: [{ ...vol, ptr: vol.ptr + a * slabFloats * 4 }, (b - a) * slabFloats] })));
  const [pitchU, pitchV] = g.detector.pitch;
  return {
    grid, ext, nViews, nCh, nRows, nChF, stride, blockFloats, chunk, nxs, u0: firstChannelU(gf), v0: firstRowV(g), pitchU, pitchV,
    buffers, vol, filter, fft, slabs,
  };
}

/** Views [c0, c1): write, extend rows (when asked), weight and filter (workers take views), backproject (workers take z slabs). */
async function filterAndBackproject(ws: Workspace, job: FdkJob, scan: Scan, [c0, c1]: [number, number], last: boolean): Promise<{ filter: number; backproject: number }> {
  const { grid, nRows, nCh, nChF, stride, blockFloats, nxs, u0, v0, pitchU, pitchV, filter, fft, vol } = job;
  const { views, viewWeights, raw, rows, filtered, scratch } = job.buffers;
  const t1 = now();
  await ws.write(raw, scan.data.subarray(c0 * nRows * nCh, c1 * nRows * nCh));
  if (job.ext) await job.ext.extendRows(ws, raw, rows, c0, c1);
  await ws.run(
    splitRange(c1 - c0, ws.parallelism).map(([a, b], i) => ({
      kernel: 'coneFilterViews' as const,
      args: [rows, nChF, nRows, c0, c0 + a, c0 + b, views, viewWeights, u0, pitchU, v0, pitchV,
        filter.response, filter.nPad, filter.twRe, filter.twIm, filter.bitrev, fft.res[i], fft.ims[i], filtered, stride],
      writes: [{ buf: filtered, start: a * blockFloats, length: (b - a) * blockFloats }],
    })),
  );
  const t2 = now();
  const slabFloats = nxs * grid.ny;
  const { x0, y0, z0 } = volumeOrigin(grid);
  await ws.run(
    job.slabs.map(([a, b], i) => ({
      kernel: 'backprojectCone' as const,
      args: [vol, nxs, grid.ny, a, b, grid.dx, grid.dy, grid.dz, x0, y0, z0, views, c0, c1, scratch[i],
        filtered, nRows, stride, nChF, u0, pitchU, v0, pitchV],
      writes: last ? [{ buf: vol, start: a * slabFloats, length: (b - a) * slabFloats }] : [],
    })),
  );
  return { filter: t2 - t1, backproject: now() - t2 };
}
