// Forward projection (Joseph's method) and its exact adjoint over a workspace, for one image
// grid and one 2D geometry. Buffers stay laid out between calls so iterative methods pay for
// the layout once.
import type { Buf, Part, Workspace } from '../engine/workspace';
import type { Geometry } from '../geometry/types';
import { firstChannelU, kernelKind, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import { gridOrigin, type ImageGrid } from '../image';
import { InputError } from '../errors';
import { splitRange } from './split';

/** Throws InputError when the geometry is not a single-row 2D geometry. */
export function require2d(g: Geometry): void {
  if (g.kind === 'cone' || g.detector.rows !== 1) {
    throw new InputError(`geometry.kind: got "${g.kind}" with ${g.detector.rows} rows, expected a 2D (parallel or fan, one row) scan`);
  }
}

/** Throws InputError when part of the grid lies outside the source circle (fan beam). */
export function requireGridInsideSourceCircle(g: Geometry, grid: ImageGrid): void {
  if (g.kind === 'parallel' || !g.sourceIsocenter) return;
  const hx = (grid.nx * grid.dx) / 2, hy = (grid.ny * grid.dy) / 2;
  const reach = Math.hypot(Math.abs(grid.cx) + hx, Math.abs(grid.cy) + hy);
  if (reach >= g.sourceIsocenter) {
    throw new InputError(`grid: reaches ${reach.toFixed(1)} mm from the isocentre, expected less than the source distance ${g.sourceIsocenter} mm`);
  }
}

export class Projector2d {
  readonly nViews: number;
  readonly nCh: number;
  readonly views: Buf;
  /** Padded image copies read by the forward projector. */
  private readonly pad: Buf;
  private readonly padT: Buf;
  private readonly tables: Buf[];
  private readonly accs: Buf[];
  private readonly accTs: Buf[];
  private readonly partials: Buf[];
  /** Addresses of the per-worker accumulators, for the band-parallel sum (shared memory). */
  private readonly accTable: Buf;
  private readonly kind: number;
  private readonly u0: number;
  private readonly pitch: number;
  private readonly x0: number;
  private readonly y0: number;

  private constructor(
    private readonly ws: Workspace,
    readonly grid: ImageGrid,
    readonly geometry: Geometry,
    viewTable: Float32Array,
  ) {
    require2d(geometry);
    requireGridInsideSourceCircle(geometry, grid);
    this.nViews = viewTable.length / VIEW_STRIDE;
    this.nCh = geometry.detector.channels;
    this.kind = kernelKind(geometry);
    this.u0 = firstChannelU(geometry);
    this.pitch = geometry.detector.pitch[0];
    ({ x0: this.x0, y0: this.y0 } = gridOrigin(grid));
    const padLen = (grid.nx + 2) * (grid.ny + 2) + 1;
    const tableLen = 10 * ((this.nCh + 3) & ~3);
    this.views = ws.alloc('views', viewTable.length);
    this.pad = ws.alloc('pad', padLen);
    this.padT = ws.alloc('padT', padLen);
    this.tables = ws.allocPerWorker('rayTable', tableLen);
    this.accs = ws.allocPerWorker('acc', padLen);
    this.accTs = ws.allocPerWorker('accT', padLen);
    this.partials = ws.sharedMemory ? [] : ws.allocPerWorker('partial', grid.nx * grid.ny);
    this.accTable = ws.alloc('accTable', 2 * ws.parallelism);
  }

  /** Lays out a projector in `ws` (after whatever the workspace already holds). */
  static async create(ws: Workspace, grid: ImageGrid, geometry: Geometry): Promise<Projector2d> {
    const table = viewVectors(geometry);
    const p = new Projector2d(ws, grid, geometry, table);
    await ws.write(p.views, table);
    await ws.write(p.accTable, Int32Array.from(p.accs.flatMap((a, i) => [a.ptr, p.accTs[i].ptr])));
    if (ws.sharedMemory) {
      // Borders of the padded copies stay zero (padImageRows writes interiors only).
      await ws.run([{ kernel: 'zeroArray', args: [p.pad, p.pad.length] }]);
      await ws.run([{ kernel: 'zeroArray', args: [p.padT, p.padT.length] }]);
    }
    return p;
  }

  private gridArgs(): number[] {
    const g = this.grid;
    return [g.nx, g.ny, g.dx, g.dy, this.x0, this.y0];
  }

  /** sino[v, k] = (A image)[v, k] for views [view0, view1) (default all). */
  async forward(image: Buf, sino: Buf, view0 = 0, view1 = this.nViews): Promise<void> {
    const { nx, ny } = this.grid;
    if (this.ws.sharedMemory) {
      await this.ws.run(splitRange(ny, this.ws.parallelism).map(([a, b]) => ({ kernel: 'padImageRows' as const, args: [image, nx, ny, a, b, this.pad, this.padT] })));
    } else {
      await this.ws.run([{ kernel: 'padImage2d', args: [image, nx, ny, this.pad, this.padT], writes: [this.pad, this.padT] }]);
    }
    const parts = splitRange(view1 - view0, this.ws.parallelism).map(([a, b], i) => ({
      kernel: 'josephForward2d' as const,
      args: [this.pad, this.padT, ...this.gridArgs(), this.views, this.kind, view0 + a, view0 + b, this.nCh, this.u0, this.pitch, sino, this.tables[i]],
      writes: [{ buf: sino, start: (view0 + a) * this.nCh, length: (b - a) * this.nCh }],
    }));
    await this.ws.run(parts);
  }

  /**
   * image = A^T sino over views [view0, view1) (default all). Each worker accumulates its share
   * of the views privately; the shares are summed into `image` (by image rows on all workers
   * when they share memory, else on the host).
   */
  async adjoint(sino: Buf, image: Buf, view0 = 0, view1 = this.nViews): Promise<void> {
    const { nx, ny } = this.grid;
    const ranges = splitRange(view1 - view0, this.ws.parallelism);
    await this.ws.run(
      ranges.map((_, i) => ({ kernel: 'zeroArray' as const, args: [this.accs[i], this.accs[i].length] })),
    );
    await this.ws.run(
      ranges.map((_, i) => ({ kernel: 'zeroArray' as const, args: [this.accTs[i], this.accTs[i].length] })),
    );
    if (this.ws.sharedMemory) {
      await this.ws.run(ranges.map(([a, b], i) => this.adjointPart(sino, view0 + a, view0 + b, i)));
      await this.ws.run(
        splitRange(ny, this.ws.parallelism).map(([a, b]) => ({
          kernel: 'unpadSumRows' as const,
          args: [this.accTable, ranges.length, nx, ny, a, b, image],
          writes: [{ buf: image, start: a * nx, length: (b - a) * nx }],
        })),
      );
      return;
    }
    await this.ws.run(
      ranges.map((_, i) => ({ kernel: 'zeroArray' as const, args: [this.partials[i], nx * ny] })),
    );
    await this.ws.run(ranges.map(([a, b], i) => this.adjointPart(sino, view0 + a, view0 + b, i)));
    await this.ws.run(
      ranges.map((_, i) => ({ kernel: 'unpadAdd2d' as const, args: [this.accs[i], this.accTs[i], nx, ny, this.partials[i]] })),
    );
    // Sum the partial images into `image` on worker 0.
    const sum = new Float32Array(nx * ny);
    for (let i = 0; i < ranges.length; i++) {
      const part = await this.ws.read(this.partials[i], 0, nx * ny, i);
      for (let k = 0; k < sum.length; k++) sum[k] += part[k];
    }
    await this.ws.write(image, sum);
  }

  /** Worker i accumulates A^T sino over views [v0, v1) into its own accumulators. */
  private adjointPart(sino: Buf, v0: number, v1: number, i: number): Part {
    return {
      kernel: 'josephAdjoint2d',
      args: [this.accs[i], this.accTs[i], ...this.gridArgs(), this.views, this.kind, v0, v1, this.nCh, this.u0, this.pitch, sino, this.tables[i]],
    };
  }
}
