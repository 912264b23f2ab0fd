// FDK reconstruction of circular cone-beam scans with a flat detector (L. A. Feldkamp,
// L. C. Davis, J. W. Kress, "Practical cone-beam algorithm", J. Opt. Soc. Am. A 1(6):612-619,
// 1984; REFERENCES.md [fdk-1984]): cosine pre-weighting, row-wise ramp filtering (the 2D engine's
// windows), Parker weights for short scans, voxel-driven backprojection with bilinear detector
// interpolation, split over z slabs across the workers.
//
// The projections stream through the engine in chunks of views from a ProjectionSource (an
// array, the page's storage or files), so memory holds the volume plus a chunk or two (not the
// whole scan), and the volume leaves the engine slab by slab (a VolumeSink). Per chunk:
//   1. write the chunk's rows ((views x detector rows) rows of channels); the next chunk is
//      read from the source meanwhile,
//   2. optionally extend every row beyond the detector edges (RowExtension, truncation correction),
//   3. weight and filter the rows (workers take views),
//   4. backproject into the volume (fdk-backprojectors.ts: the axial path for circular orbits,
//      the general one for calibrated trajectories).
import type { Buf, Workspace } from '../engine/workspace';
import { throwIfCancelled } from '../errors';
import { coneFovHalfHeight, requireCone } from '../geometry/cone';
import { extendDetector } from '../geometry/presets';
import { viewCount, type Geometry } from '../geometry/types';
import { firstChannelU, firstRowV, fovRadius, viewVectors } from '../geometry/view-vectors';
import { asSource, viewSize, type ProjectionSource } from '../projection-source';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { checkVolumeGrid, withVolumeMemory, type Volume, type VolumeGrid } from '../volume';
import { collectVolume, type VolumeInfo, type VolumeSink } from '../volume-sink';
import { createBackprojector, isAxialTrajectory, rowBlockFloats, type FdkBackprojector } from './fdk-backprojectors';
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
  prepare?(ws: Workspace): Promise<void>;
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
  /**
   * Engine memory for one chunk of filtered views, bytes (default 32 MiB), counted as blocks of
   * (rows + 3) x (channels + 3) floats per view; the axial path lays out twice that.
   */
  chunkBytes?: number;
}

export interface FdkTimings {
  weights: number;
  filter: number;
  backproject: number;
  /** Reading the volume out of the engine into the sink. */
  output: number;
}

export interface FdkRun {
  /** The volume's description (the voxels went to the sink). */
  info: VolumeInfo;
  warnings: string[];
  scanType: 'full' | 'short' | 'limited';
  /** Which backprojector ran: axial (circular orbit, untilted panel) or general. */
  backprojector: 'axial' | 'general';
  /** Seconds spent per stage (summed over chunks). */
  timings: FdkTimings;
}

export interface FdkResult extends Omit<FdkRun, 'info'> {
  volume: Volume;
}

const now = () => performance.now() / 1000;

/** Views per chunk: as many filtered blocks as fit in chunkBytes, at least one per worker. */
export function fdkChunkViews(nCh: number, nRows: number, views: number, workers: number, chunkBytes = 32 * 2 ** 20): number {
  return Math.max(workers, Math.min(views, Math.floor(chunkBytes / (rowBlockFloats(nCh, nRows) * 4))));
}

/** FDK of a cone-beam scan onto params.grid. Values in the scan's units per mm (mu for line integrals). */
export async function fdk3d(ws: Workspace, scan: Scan | ProjectionSource, params: FdkParams, hooks: RunHooks = {}): Promise<FdkResult> {
  const grid = checkVolumeGrid(params.grid);
  const out = collectVolume(grid);
  const { info, ...rest } = await fdkToSink(ws, scan, params, out.sink, hooks);
  return { ...rest, volume: { ...info, data: out.data } };
}

/** FDK with the volume handed to `sink` slab by slab as it leaves the engine. */
export async function fdkToSink(ws: Workspace, scan: Scan | ProjectionSource, params: FdkParams, sink: VolumeSink, hooks: RunHooks = {}): Promise<FdkRun> {
  requireCone(scan.geometry);
  const source = asSource(scan);
  const g = source.geometry;
  const grid = checkVolumeGrid(params.grid);
  requireGridInsideSourceCircle(g, grid);
  const window = checkFilter(params.filter ?? 'ramp', params.bandLimit);
  const band = bandEdge(g, params.bandLimit);
  const gf = params.extension ? extendDetector(g, params.extension.left, params.extension.right) : g; // the detector the filter sees
  const t0 = now();
  const { weights, warnings, scanType } = fbpPreweights(g, gf.detector.channels, firstChannelU(gf)); // g: the measured detector, for redundancy weights
  const timings: FdkTimings = { weights: now() - t0, filter: 0, backproject: 0, output: 0 };
  throwIfCancelled(hooks.signal);
  ws.reset();
  const job = await prepareJob(ws, g, gf, grid, weights, { ...params, filter: window }, band.edge);
  await streamChunks(ws, job, source, params.extension, timings, hooks);
  const t1 = now();
  await job.bp.output(sink, hooks.signal);
  throwIfCancelled(hooks.signal);
  timings.output = now() - t1;
  return {
    info: { grid, quantity: 'mu', muWater: source.muWater, fovRadius: fovRadius(g), fovHalfHeight: coneFovHalfHeight(g) },
    warnings: band.warning ? [...warnings, band.warning] : warnings,
    scanType,
    backprojector: job.bp.kind,
    timings,
  };
}

/** A laid-out FDK job: views per chunk, the chunk buffers and the backprojector. */
interface FdkLayout {
  chunk: number;
  raw: Buf;
  /** The chunk's rows as the filter takes them (extended rows, or `raw` itself). */
  rows: Buf;
  bp: FdkBackprojector;
}

/** Lays out the chunk buffers, the filter and the backprojector, and writes the view tables. */
async function prepareJob(ws: Workspace, g: Geometry, gf: Geometry, grid: VolumeGrid, weights: Float32Array, params: FdkParams & { filter: FilterWindow }, bandEdgeFraction: number): Promise<FdkLayout> {
  const ext = params.extension;
  const table = viewVectors(g);
  const { channels: nCh, rows: nRows } = g.detector;
  const nChF = gf.detector.channels;
  const chunk = fdkChunkViews(nChF, nRows, viewCount(g), ws.parallelism, params.chunkBytes);
  const { views, viewWeights, raw, rows } = withVolumeMemory(grid, () => {
    const raw = ws.alloc('projChunk', chunk * nRows * nCh);
    return {
      views: ws.alloc('views', table.length),
      viewWeights: ws.alloc('viewWeights', weights.length),
      raw,
      rows: ext ? ws.alloc('extendedChunk', chunk * nRows * nChF) : raw,
    };
  });
  // Zero padding as in fbp2d: the measured channels filtered exactly (linear convolution).
  const filter = await prepareFilter(ws, gf, ext ? Math.max(ext.left, ext.right) + nCh : nCh, params.filter, bandEdgeFraction);
  const bp = withVolumeMemory(grid, () => createBackprojector({
    ws, grid, nCh: nChF, nRows, chunk, views, viewWeights, filter,
    u0: firstChannelU(gf), pitchU: g.detector.pitch[0], v0: firstRowV(g), pitchV: g.detector.pitch[1],
  }, isAxialTrajectory(table)));
  await ext?.prepare?.(ws);
  await ws.write(views, table);
  await ws.write(viewWeights, weights);
  await bp.clear();
  return { chunk, raw, rows, bp };
}

/** Every chunk of views: read (the next one meanwhile), extend, weight and filter, backproject. */
async function streamChunks(ws: Workspace, job: FdkLayout, source: ProjectionSource, ext: RowExtension | undefined, timings: FdkTimings, hooks: RunHooks): Promise<void> {
  const nViews = viewCount(source.geometry), n = viewSize(source.geometry);
  const chunks = splitRange(nViews, Math.ceil(nViews / job.chunk));
  let next = source.read(chunks[0][0], chunks[0][1]);
  for (let c = 0; c < chunks.length; c++) {
    throwIfCancelled(hooks.signal);
    const [c0, c1] = chunks[c];
    const t1 = now();
    const data = await next;
    if (data.length !== (c1 - c0) * n) throw new Error(`projection source: views ${c0} to ${c1} gave ${data.length} values, expected ${(c1 - c0) * n}`);
    await ws.write(job.raw, data);
    // The next chunk is read while the engine works on this one.
    if (c + 1 < chunks.length) next = source.read(chunks[c + 1][0], chunks[c + 1][1]);
    if (ext) await ext.extendRows(ws, job.raw, job.rows, c0, c1);
    await job.bp.filter(job.rows, c0, c1);
    const t2 = now();
    await job.bp.backproject(c0, c1, c === chunks.length - 1);
    timings.filter += t2 - t1;
    timings.backproject += now() - t2;
    hooks.onProgress?.((c + 1) / chunks.length, 'filter + backproject');
  }
}
