// FDK reconstruction of circular cone-beam scans with a flat detector (L. A. Feldkamp,
// L. C. Davis, J. W. Kress, "Practical cone-beam algorithm", J. Opt. Soc. Am. A 1(6):612-619,
// 1984; references.md 3e): cosine pre-weighting, row-wise ramp filtering (the 2D engine's
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
  const table = viewVectors(g);
  const nViews = table.length / VIEW_STRIDE;
  checkScanData(scan, nViews);
  const { channels: nCh, rows: nRows } = g.detector;
  const nChF = gf.detector.channels;
  const [pitchU, pitchV] = g.detector.pitch;
  const u0 = firstChannelU(gf), v0 = firstRowV(g);
  const t0 = now();
  const { weights, warnings, scanType } = fbpPreweights(g, nChF, u0); // g: the measured detector, for redundancy weights
  const timings = { weights: now() - t0, filter: 0, backproject: 0 };
  throwIfCancelled(hooks.signal);

  ws.reset();
  const stride = nChF + 3;
  const blockFloats = (nRows + 3) * stride;
  const chunk = Math.max(ws.parallelism, Math.min(nViews, Math.floor((params.chunkBytes ?? 32 * 2 ** 20) / (blockFloats * 4))));
  const nxs = (grid.nx + 3) & ~3;
  const { views, viewWeights, raw, rows, filtered, vol, scratch } = withVolumeMemory(grid, () => {
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
  const filter = await prepareFilter(ws, gf, ext ? Math.max(ext.left, ext.right) + nCh : nCh, window, band.edge);
  const res = ws.allocPerWorker('fftRe', filter.nPad);
  const ims = ws.allocPerWorker('fftIm', filter.nPad);
  await ext?.prepare?.(ws, scan);
  await ws.write(views, table);
  await ws.write(viewWeights, weights);

  const slabs = splitRange(grid.nz, ws.parallelism);
  const slabFloats = nxs * grid.ny;
  await ws.run(slabs.map(([a, b]) => ({ kernel: 'zeroArray' as const, args: [{ ...vol, ptr: vol.ptr + a * slabFloats * 4 }, (b - a) * slabFloats] })));
  const { x0, y0, z0 } = volumeOrigin(grid);
  const chunks = splitRange(nViews, Math.ceil(nViews / chunk));
  for (let c = 0; c < chunks.length; c++) {
    throwIfCancelled(hooks.signal);
    const [c0, c1] = chunks[c];
    const t1 = now();
    await ws.write(raw, scan.data.subarray(c0 * nRows * nCh, c1 * nRows * nCh));
    if (ext) await ext.extendRows(ws, raw, rows, c0, c1);
    await ws.run(
      splitRange(c1 - c0, ws.parallelism).map(([a, b], i) => ({
        kernel: 'coneFilterViews' as const,
        args: [rows, nChF, nRows, c0, c0 + a, c0 + b, views, viewWeights, u0, pitchU, v0, pitchV,
          filter.response, filter.nPad, filter.twRe, filter.twIm, filter.bitrev, res[i], ims[i], filtered, stride],
        writes: [{ buf: filtered, start: a * blockFloats, length: (b - a) * blockFloats }],
      })),
    );
    const t2 = now();
    const last = c === chunks.length - 1;
    await ws.run(
      slabs.map(([a, b], i) => ({
        kernel: 'backprojectCone' as const,
        args: [vol, nxs, grid.ny, a, b, grid.dx, grid.dy, grid.dz, x0, y0, z0, views, c0, c1, scratch[i],
          filtered, nRows, stride, nChF, u0, pitchU, v0, pitchV],
        writes: last ? [{ buf: vol, start: a * slabFloats, length: (b - a) * slabFloats }] : [],
      })),
    );
    timings.filter += t2 - t1;
    timings.backproject += now() - t2;
    hooks.onProgress?.((c + 1) / chunks.length, 'filter + backproject');
  }
  const padded = await ws.read(vol);
  const data = new Float32Array(grid.nx * grid.ny * grid.nz);
  for (let r = 0; r < grid.ny * grid.nz; r++) data.set(padded.subarray(r * nxs, r * nxs + grid.nx), r * grid.nx);
  return {
    volume: { grid, data, quantity: 'mu', muWater: scan.muWater, fovRadius: fovRadius(g), fovHalfHeight: coneFovHalfHeight(g) },
    warnings: band.warning ? [...warnings, band.warning] : warnings,
    scanType,
    timings,
  };
}
