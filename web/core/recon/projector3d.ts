// Cone-beam forward projection (Joseph's method in 3D) and its exact adjoint over a workspace,
// for one volume grid and one cone geometry: the same shape as Projector2d, so iterative
// methods can run on volumes. Projections are [view][row][channel]; volumes x fastest.
//
// Memory: two zero-padded copies of the volume ((nx+3)(ny+3)(nz+3) floats each), shared by
// all workers. The forward projector splits views across workers; the adjoint gives each
// worker a range of padded z planes to write (cone-joseph.ts), so it needs no per-worker
// accumulators. The padded copies double as the adjoint's accumulators: a forward call always
// re-pads, an adjoint call always zeroes them first.
//
// backprojectVoxels is a second, voxel-driven backprojector (the FDK kernel without the ramp
// filter, cone-backproject.ts): not the exact transpose of the forward projector but close to
// it, and several times faster, because it gathers from the detector instead of scattering
// into the volume. OS-SART on volumes uses it for its update and pixel weights (an unmatched
// projector/backprojector pair, as in REFERENCES.md [mueller-1999] and [zeng-gullberg-2000]).
import type { Buf, Workspace } from '../engine/workspace';
import { InputError, throwIfCancelled } from '../errors';
import { maxConeAngle, requireCone } from '../geometry/cone';
import type { Geometry } from '../geometry/types';
import { firstChannelU, firstRowV, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import { checkVolumeGrid, volumeOrigin, withVolumeMemory, type VolumeGrid } from '../volume';
import { requireGridInsideSourceCircle } from './projector';
import { CONE_VIEW_FLOATS, rowBlockFloats } from './fdk-backprojectors';
import { splitRange } from './split';

/** Views each worker takes between two checks for a cancel. */
const VIEWS_PER_WORKER_BATCH = 2;

/** Views padded and backprojected together by backprojectVoxels (about 0.8 MB each at 512 x 384). */
const VOXEL_BATCH_VIEWS = 16;

/** Largest angle a ray may lean out of the xy plane (Joseph steps along x or y only). */
const MAX_CONE_ANGLE = Math.PI / 4;

export class Projector3d {
  readonly nViews: number;
  readonly nCh: number;
  readonly nRows: number;
  readonly views: Buf;
  /** Padded copies read by the forward projector, and the adjoint's accumulators. */
  private readonly pad: Buf;
  private readonly padT: Buf;
  private readonly u0: number;
  private readonly v0: number;
  private readonly origin: { x0: number; y0: number; z0: number };
  /** backprojectVoxels: padded detector rows of a batch of views, and per-worker view constants. */
  private readonly rowBlocks: Buf;
  private readonly coneViews: Buf[];

  private constructor(
    private readonly ws: Workspace,
    readonly grid: VolumeGrid,
    readonly geometry: Geometry,
    viewTable: Float32Array,
  ) {
    this.nViews = viewTable.length / VIEW_STRIDE;
    this.nCh = geometry.detector.channels;
    this.nRows = geometry.detector.rows;
    this.u0 = firstChannelU(geometry);
    this.v0 = firstRowV(geometry);
    this.origin = volumeOrigin(grid);
    const padLen = (grid.nx + 3) * (grid.ny + 3) * (grid.nz + 3);
    this.views = ws.alloc('views', viewTable.length);
    this.pad = ws.alloc('pad3', padLen);
    this.padT = ws.alloc('padT3', padLen);
    this.rowBlocks = ws.alloc('rowBlocks3', VOXEL_BATCH_VIEWS * rowBlockFloats(this.nCh, this.nRows));
    this.coneViews = ws.allocPerWorker('coneViews3', CONE_VIEW_FLOATS * VOXEL_BATCH_VIEWS);
  }

  /** Engine floats a projector lays out for a grid and detector (memory estimates). */
  static floats(grid: VolumeGrid, nCh: number, nRows: number, workers: number): number {
    return 2 * (grid.nx + 3) * (grid.ny + 3) * (grid.nz + 3) + VOXEL_BATCH_VIEWS * rowBlockFloats(nCh, nRows) + workers * CONE_VIEW_FLOATS * VOXEL_BATCH_VIEWS;
  }

  /** Lays out a projector in `ws` (after whatever the workspace already holds). */
  static async create(ws: Workspace, grid: VolumeGrid, geometry: Geometry): Promise<Projector3d> {
    requireCone(geometry);
    checkVolumeGrid(grid);
    requireGridInsideSourceCircle(geometry, grid);
    const angle = maxConeAngle(geometry);
    if (angle > MAX_CONE_ANGLE) {
      throw new InputError(`geometry: rays lean up to ${((angle * 180) / Math.PI).toFixed(1)} degrees out of the rotation plane, expected at most 45 for the 3D projector`);
    }
    const table = viewVectors(geometry);
    const p = withVolumeMemory(grid, () => new Projector3d(ws, grid, geometry, table));
    await ws.write(p.views, table);
    return p;
  }

  /** Floats in a projection array ([view][row][channel]). */
  get projectionLength(): number {
    return this.nViews * this.nRows * this.nCh;
  }

  private args(): number[] {
    const g = this.grid, o = this.origin;
    return [g.nx, g.ny, g.nz, g.dx, g.dy, g.dz, o.x0, o.y0, o.z0];
  }

  private detectorArgs(): number[] {
    const [pu, pv] = this.geometry.detector.pitch;
    return [this.nCh, this.nRows, this.u0, pu, this.v0, pv];
  }

  /** Padded plane ranges, one per worker. */
  private planes(): Array<[number, number]> {
    return splitRange(this.grid.nz + 3, this.ws.parallelism);
  }

  /**
   * Runs views [view0, view1) in batches of a few views per worker, checking `signal` between
   * batches: a cancel stops a projection of a large volume within a batch, not a whole call.
   * Each voxel still receives its views in view order, so batches do not change a bit.
   */
  private async inBatches(view0: number, view1: number, signal: AbortSignal | undefined, run: (a: number, b: number) => Promise<unknown>): Promise<void> {
    const batch = VIEWS_PER_WORKER_BATCH * this.ws.parallelism;
    for (let a = view0; a < view1; a += batch) {
      throwIfCancelled(signal);
      await run(a, Math.min(view1, a + batch));
    }
  }

  /** proj[v, r, k] = (A volume)[v, r, k] for views [view0, view1) (default all). */
  async forward(volume: Buf, proj: Buf, view0 = 0, view1 = this.nViews, signal?: AbortSignal): Promise<void> {
    const { nx, ny, nz } = this.grid;
    const plane = (nx + 3) * (ny + 3);
    await this.ws.run(
      this.planes().map(([a, b]) => ({
        kernel: 'padVolume' as const,
        args: [volume, nx, ny, nz, a, b, this.pad, this.padT],
        writes: [{ buf: this.pad, start: a * plane, length: (b - a) * plane }, { buf: this.padT, start: a * plane, length: (b - a) * plane }],
      })),
    );
    const per = this.nRows * this.nCh;
    await this.inBatches(view0, view1, signal, (c0, c1) => this.ws.run(
      splitRange(c1 - c0, this.ws.parallelism).map(([a, b]) => ({
        kernel: 'josephForwardCone' as const,
        args: [this.pad, this.padT, ...this.args(), this.views, c0 + a, c0 + b, ...this.detectorArgs(), proj],
        writes: [{ buf: proj, start: (c0 + a) * per, length: (b - a) * per }],
      })),
    ));
  }

  /** volume = A^T proj over views [view0, view1) (default all). */
  async adjoint(proj: Buf, volume: Buf, view0 = 0, view1 = this.nViews, signal?: AbortSignal): Promise<void> {
    const { nx, ny, nz } = this.grid;
    const plane = (nx + 3) * (ny + 3);
    const owned = this.planes();
    const at = (b: Buf, p: number): Buf => ({ ...b, ptr: b.ptr + p * plane * 4 });
    await this.ws.run(owned.map(([a, b]) => ({ kernel: 'zeroArray' as const, args: [at(this.pad, a), (b - a) * plane] })));
    await this.ws.run(owned.map(([a, b]) => ({ kernel: 'zeroArray' as const, args: [at(this.padT, a), (b - a) * plane] })));
    await this.inBatches(view0, view1, signal, (c0, c1) => this.ws.run(
      owned.map(([a, b]) => ({
        kernel: 'josephAdjointCone' as const,
        args: [this.pad, this.padT, ...this.args(), this.views, c0, c1, ...this.detectorArgs(), proj, a, b],
      })),
    ));
    // Slice k is padded plane k + 1: the worker that owns the plane folds the slice.
    await this.ws.run(
      owned.map(([a, b]) => {
        const k0 = Math.max(0, a - 1), k1 = Math.min(nz, b - 1);
        return {
          kernel: 'unpadVolume' as const,
          args: [this.pad, this.padT, nx, ny, nz, k0, Math.max(k0, k1), volume],
          writes: [{ buf: volume, start: k0 * nx * ny, length: Math.max(0, k1 - k0) * nx * ny }],
        };
      }),
    );
  }

  /**
   * volume = B proj over views [view0, view1): for every voxel and view, the detector value
   * where the ray through the voxel centre lands (bilinear), times (D / l)^2 dx dy dz / (pu pv),
   * l the voxel's distance from the source along the central ray. That factor is the number of
   * rays of one view a voxel meets, times their step weight, so B's column sums match the forward
   * projector's (A^T 1) to within the obliquity of the rays, while B itself is a voxel-driven
   * gather. The padded copies serve as the accumulator (rows of nxs = nx rounded up to 4).
   */
  async backprojectVoxels(proj: Buf, volume: Buf, view0 = 0, view1 = this.nViews, signal?: AbortSignal): Promise<void> {
    const { nx, ny, nz, dx, dy, dz } = this.grid;
    const { x0, y0, z0 } = this.origin;
    const [pu, pv] = this.geometry.detector.pitch;
    const nxs = (nx + 3) & ~3;
    const slabs = splitRange(nz, this.ws.parallelism);
    const slice = nxs * ny;
    const acc = this.pad;
    await this.ws.run(slabs.map(([a, b]) => ({ kernel: 'zeroArray' as const, args: [{ ...acc, ptr: acc.ptr + a * slice * 4 }, (b - a) * slice] })));
    const stride = this.nCh + 3;
    const block = rowBlockFloats(this.nCh, this.nRows);
    const scale = (dx * dy * dz) / (pu * pv);
    for (let c0 = view0; c0 < view1; c0 += VOXEL_BATCH_VIEWS) {
      throwIfCancelled(signal);
      const c1 = Math.min(view1, c0 + VOXEL_BATCH_VIEWS);
      await this.ws.run(splitRange(c1 - c0, this.ws.parallelism).map(([a, b]) => ({
        kernel: 'padConeRows' as const,
        args: [proj, this.nCh, this.nRows, this.views, c0 + a, c0 + b, scale, { ...this.rowBlocks, ptr: this.rowBlocks.ptr + a * block * 4 }, stride],
        writes: [{ buf: this.rowBlocks, start: a * block, length: (b - a) * block }],
      })));
      // Each worker keeps its slab of the accumulator in every batch (private memories too).
      await this.ws.run(slabs.map(([a, b], i) => ({
        kernel: 'backprojectCone' as const,
        args: [acc, nxs, ny, a, b, dx, dy, dz, x0, y0, z0, this.views, c0, c1, this.coneViews[i],
          this.rowBlocks, this.nRows, stride, this.nCh, this.u0, pu, this.v0, pv],
      })));
    }
    await this.ws.run(slabs.map(([a, b]) => ({
      kernel: 'packRows' as const,
      args: [acc, nxs, nx, a * ny, b * ny, volume],
      writes: [{ buf: volume, start: a * ny * nx, length: (b - a) * ny * nx }],
    })));
  }
}
