// The two ways FDK weights, filters and backprojects a chunk of views, and reads its volume out
// slab by slab:
// - axial (assembly/cone-backproject-axial.ts): every view's central ray and detector u axis lie
//   in the xy plane (circular orbits with an untilted panel). The volume is kept as columns
//   along z and the detector column and distance weight are computed once per (x, y, view).
//   Workers take bands of y rows.
// - general (assembly/cone-backproject.ts): any calibrated trajectory; the volume is x fastest
//   and workers take z slabs.
// Both add the views of a voxel in view order, so results do not depend on chunk sizes or on
// how many workers share the work.
import type { Buf, Part, Workspace } from '../engine/workspace';
import { VIEW_STRIDE } from '../geometry/view-vectors';
import { volumeOrigin, type VolumeGrid } from '../volume';
import type { VolumeSink } from '../volume-sink';
import type { FilterTables } from './filter-response';
import { splitRange } from './split';

/** Floats of per-view constants the backprojectors keep per view (assembly CONE_VIEW_FLOATS). */
export const CONE_VIEW_FLOATS = 16;

/** What both backprojectors need to know about the job. */
export interface FdkJob {
  ws: Workspace;
  grid: VolumeGrid;
  /** Detector the filter sees (extended when truncation correction runs). */
  nCh: number;
  nRows: number;
  /** Views per chunk. */
  chunk: number;
  views: Buf;
  viewWeights: Buf;
  u0: number;
  pitchU: number;
  v0: number;
  pitchV: number;
  filter: FilterTables;
}

export interface FdkBackprojector {
  readonly kind: 'axial' | 'general';
  /** Zeroes the volume. */
  clear(): Promise<void>;
  /** Weights and filters views [c0, c1) of `rows` (the chunk's rows, channel fastest). */
  filter(rows: Buf, c0: number, c1: number): Promise<void>;
  /** Adds views [c0, c1); `last`: the final chunk (private memories then share the volume). */
  backproject(c0: number, c1: number, last: boolean): Promise<void>;
  /** Hands the volume to `sink` in slabs of whole slices (x fastest). */
  output(sink: VolumeSink, signal?: AbortSignal): Promise<void>;
}

/**
 * Column-pair bytes of the views the axial kernel takes through a band at a time: about half a
 * core's level-2 cache on the machines we measured (2 MiB), so that neighbouring columns find
 * them there (measured: 2 to 3 times faster than whole chunks of 30 MiB).
 */
const VIEW_BLOCK_BYTES = 2 ** 20;

/** Largest slab read out of the engine at once, voxels (16 MiB). */
const OUTPUT_SLAB_VOXELS = 4 * 2 ** 20;

/**
 * True when every view's central ray and u axis have no z component (the axial backprojector's
 * condition); the view table is float32, so circular orbits give exact zeros.
 */
export function isAxialTrajectory(table: Float32Array): boolean {
  for (let b = 0; b < table.length; b += VIEW_STRIDE) {
    if (table[b + 5] !== table[b + 2] || table[b + 8] !== 0) return false;
  }
  return true;
}

/** Engine floats per view of the general path's filtered block (nRows + 3 rows of stride floats). */
export function rowBlockFloats(nCh: number, nRows: number): number {
  return (nRows + 3) * (nCh + 3);
}

function pairColumnFloats(nRows: number): number {
  return (2 * (nRows + 3) + 3) & ~3;
}

/** Engine floats the backprojector of this kind lays out (for memory estimates). */
export function backprojectorFloats(kind: 'axial' | 'general', grid: VolumeGrid, nCh: number, nRows: number, chunk: number, workers: number): number {
  const slab = Math.max(1, Math.min(grid.nz, Math.floor(OUTPUT_SLAB_VOXELS / (grid.nx * grid.ny)))) * grid.nx * grid.ny;
  if (kind === 'axial') {
    return grid.nx * grid.ny * ((grid.nz + 3) & ~3) + chunk * (nCh + 2) * pairColumnFloats(nRows) + workers * rowBlockFloats(nCh, nRows) + slab + workers * CONE_VIEW_FLOATS * chunk;
  }
  return ((grid.nx + 3) & ~3) * grid.ny * grid.nz + chunk * rowBlockFloats(nCh, nRows) + slab + workers * CONE_VIEW_FLOATS * chunk;
}

/** Lays out the backprojector that fits the trajectory. */
export function createBackprojector(job: FdkJob, axial: boolean): FdkBackprojector {
  return axial ? new AxialBackprojector(job) : new GeneralBackprojector(job);
}

function filterArgs(job: FdkJob, rows: Buf, c0: number, a: number, b: number, worker: number, fftRe: Buf[], fftIm: Buf[]) {
  const f = job.filter;
  return [rows, job.nCh, job.nRows, c0, c0 + a, c0 + b, job.views, job.viewWeights, job.u0, job.pitchU, job.v0, job.pitchV,
    f.response, f.nPad, f.twRe, f.twIm, f.bitrev, fftRe[worker], fftIm[worker]];
}

class AxialBackprojector implements FdkBackprojector {
  readonly kind = 'axial';
  private readonly nzs: number;
  private readonly colStride: number;
  private readonly vol: Buf;
  private readonly pairs: Buf;
  private readonly blocks: Buf[];
  private readonly scratch: Buf[];
  private readonly fftRe: Buf[];
  private readonly fftIm: Buf[];
  private readonly bands: Array<[number, number]>;
  /** Views the kernel takes through the band at a time. */
  private readonly viewBlock: number;

  constructor(private readonly job: FdkJob) {
    const { ws, grid } = job;
    this.nzs = (grid.nz + 3) & ~3;
    this.colStride = pairColumnFloats(job.nRows);
    this.vol = ws.alloc('volumeColumns', grid.nx * grid.ny * this.nzs);
    this.pairs = ws.alloc('filteredPairs', job.chunk * (job.nCh + 2) * this.colStride);
    this.blocks = ws.allocPerWorker('filteredView', rowBlockFloats(job.nCh, job.nRows));
    this.scratch = ws.allocPerWorker('coneViews', CONE_VIEW_FLOATS * job.chunk);
    this.fftRe = ws.allocPerWorker('fftRe', job.filter.nPad);
    this.fftIm = ws.allocPerWorker('fftIm', job.filter.nPad);
    this.bands = splitRange(grid.ny, ws.parallelism);
    this.viewBlock = Math.max(1, Math.floor(VIEW_BLOCK_BYTES / ((job.nCh + 2) * this.colStride * 4)));
  }

  private band(a: number, b: number) {
    const column = this.job.grid.nx * this.nzs;
    return { buf: this.vol, start: a * column, length: (b - a) * column };
  }

  async clear(): Promise<void> {
    await this.job.ws.run(this.bands.map(([a, b]) => {
      const r = this.band(a, b);
      return { kernel: 'zeroArray' as const, args: [{ ...this.vol, ptr: this.vol.ptr + r.start * 4 }, r.length] };
    }));
  }

  async filter(rows: Buf, c0: number, c1: number): Promise<void> {
    const viewFloats = (this.job.nCh + 2) * this.colStride;
    await this.job.ws.run(splitRange(c1 - c0, this.job.ws.parallelism).map(([a, b], i): Part => ({
      kernel: 'coneFilterPairs',
      args: [...filterArgs(this.job, rows, c0, a, b, i, this.fftRe, this.fftIm), this.blocks[i], this.job.nCh + 3, this.pairs, this.colStride],
      writes: [{ buf: this.pairs, start: a * viewFloats, length: (b - a) * viewFloats }],
    })));
  }

  async backproject(c0: number, c1: number, last: boolean): Promise<void> {
    const { grid, ws } = this.job;
    const { x0, y0, z0 } = volumeOrigin(grid);
    const j = this.job;
    await ws.run(this.bands.map(([a, b], i): Part => ({
      kernel: 'backprojectConeAxial',
      args: [this.vol, grid.nx, grid.nz, this.nzs, a, b, grid.dx, grid.dy, grid.dz, x0, y0, z0, j.views, c0, c1, this.scratch[i],
        this.pairs, j.nRows, j.nCh, this.colStride, j.u0, j.pitchU, j.v0, j.pitchV, this.viewBlock],
      writes: last ? [this.band(a, b)] : [],
    })));
  }

  async output(sink: VolumeSink, signal?: AbortSignal): Promise<void> {
    const { grid, ws } = this.job;
    const slices = Math.max(1, Math.min(grid.nz, Math.floor(OUTPUT_SLAB_VOXELS / (grid.nx * grid.ny))));
    const slab = ws.alloc('outputSlab', slices * grid.nx * grid.ny);
    for (let k0 = 0; k0 < grid.nz; k0 += slices) {
      if (signal?.aborted) return;
      const k1 = Math.min(grid.nz, k0 + slices);
      await ws.run([{ kernel: 'columnsToSlab', args: [this.vol, grid.nx, grid.ny, this.nzs, k0, k1, slab], writes: [] }]);
      await sink.write(k0, await ws.read(slab, 0, (k1 - k0) * grid.nx * grid.ny));
    }
  }
}

class GeneralBackprojector implements FdkBackprojector {
  readonly kind = 'general';
  private readonly nxs: number;
  private readonly stride: number;
  private readonly vol: Buf;
  private readonly filtered: Buf;
  private readonly scratch: Buf[];
  private readonly fftRe: Buf[];
  private readonly fftIm: Buf[];
  private readonly slabs: Array<[number, number]>;

  constructor(private readonly job: FdkJob) {
    const { ws, grid } = job;
    this.nxs = (grid.nx + 3) & ~3;
    this.stride = job.nCh + 3;
    this.vol = ws.alloc('volume', this.nxs * grid.ny * grid.nz);
    this.filtered = ws.alloc('filteredChunk', job.chunk * rowBlockFloats(job.nCh, job.nRows));
    this.scratch = ws.allocPerWorker('coneViews', CONE_VIEW_FLOATS * job.chunk);
    this.fftRe = ws.allocPerWorker('fftRe', job.filter.nPad);
    this.fftIm = ws.allocPerWorker('fftIm', job.filter.nPad);
    this.slabs = splitRange(grid.nz, ws.parallelism);
  }

  async clear(): Promise<void> {
    const slice = this.nxs * this.job.grid.ny;
    await this.job.ws.run(this.slabs.map(([a, b]) => ({ kernel: 'zeroArray' as const, args: [{ ...this.vol, ptr: this.vol.ptr + a * slice * 4 }, (b - a) * slice] })));
  }

  async filter(rows: Buf, c0: number, c1: number): Promise<void> {
    const block = rowBlockFloats(this.job.nCh, this.job.nRows);
    await this.job.ws.run(splitRange(c1 - c0, this.job.ws.parallelism).map(([a, b], i): Part => ({
      kernel: 'coneFilterViews',
      args: [...filterArgs(this.job, rows, c0, a, b, i, this.fftRe, this.fftIm), this.filtered, this.stride],
      writes: [{ buf: this.filtered, start: a * block, length: (b - a) * block }],
    })));
  }

  async backproject(c0: number, c1: number, last: boolean): Promise<void> {
    const { grid, ws } = this.job;
    const { x0, y0, z0 } = volumeOrigin(grid);
    const j = this.job;
    const slice = this.nxs * grid.ny;
    await ws.run(this.slabs.map(([a, b], i): Part => ({
      kernel: 'backprojectCone',
      args: [this.vol, this.nxs, grid.ny, a, b, grid.dx, grid.dy, grid.dz, x0, y0, z0, j.views, c0, c1, this.scratch[i],
        this.filtered, j.nRows, this.stride, j.nCh, j.u0, j.pitchU, j.v0, j.pitchV],
      writes: last ? [{ buf: this.vol, start: a * slice, length: (b - a) * slice }] : [],
    })));
  }

  async output(sink: VolumeSink, signal?: AbortSignal): Promise<void> {
    const { grid, ws } = this.job;
    const slice = grid.nx * grid.ny;
    const slices = Math.max(1, Math.min(grid.nz, Math.floor(OUTPUT_SLAB_VOXELS / slice)));
    for (let k0 = 0; k0 < grid.nz; k0 += slices) {
      if (signal?.aborted) return;
      const k1 = Math.min(grid.nz, k0 + slices);
      const padded = await ws.read(this.vol, k0 * this.nxs * grid.ny, (k1 - k0) * this.nxs * grid.ny);
      const slab = new Float32Array((k1 - k0) * slice);
      for (let r = 0; r < (k1 - k0) * grid.ny; r++) slab.set(padded.subarray(r * this.nxs, r * this.nxs + grid.nx), r * grid.nx);
      await sink.write(k0, slab);
    }
  }
}
