// Forward projection (Joseph's method) and its exact adjoint over a workspace, for one image
// grid and one 2D geometry. Buffers stay laid out between calls so iterative methods pay for
// the layout once.
import type { Buf, Part, Workspace } from '../engine/workspace';
import type { Geometry } from '../geometry/types';
import { firstChannelU, kernelKind, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import { gridOrigin, type ImageGrid } from '../image';
import { InputError } from '../errors';
import { adjointChunkCount, planAdjointChunks } from './adjoint-chunks';
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
  /** Accumulators of the adjoint, one pair (acc, accT) per view chunk, laid out one after another. */
  private readonly accumulators: Buf;
  private readonly accLength: number;
  /** Byte addresses of each chunk's (acc, accT), for unpadSumRows. */
  private readonly accTable: Buf;
  /** One unpadded image per chunk (private memories: the host sums them). */
  private readonly partials: Buf[];
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
    const chunks = adjointChunkCount(ws.parallelism);
    this.views = ws.alloc('views', viewTable.length);
    this.pad = ws.alloc('pad', padLen);
    this.padT = ws.alloc('padT', padLen);
    this.tables = ws.allocPerWorker('rayTable', tableLen);
    this.accLength = (padLen + 3) & ~3;
    this.accumulators = ws.alloc('adjointAccumulators', chunks * 2 * this.accLength);
    this.accTable = ws.alloc('accTable', 2 * chunks);
    this.partials = ws.sharedMemory ? [] : Array.from({ length: chunks }, (_, c) => ws.alloc(`partial${c}`, grid.nx * grid.ny));
  }

  /** Lays out a projector in `ws` (after whatever the workspace already holds). */
  static async create(ws: Workspace, grid: ImageGrid, geometry: Geometry): Promise<Projector2d> {
    const table = viewVectors(geometry);
    const p = new Projector2d(ws, grid, geometry, table);
    await ws.write(p.views, table);
    const chunks = adjointChunkCount(ws.parallelism);
    await ws.write(p.accTable, Int32Array.from({ length: 2 * chunks }, (_, i) => p.accPtr(i >> 1) + (i & 1) * p.accLength * 4));
    if (ws.sharedMemory) {
      // Borders of the padded copies stay zero (padImageRows writes interiors only).
      await ws.run([{ kernel: 'zeroArray', args: [p.pad, p.pad.length] }]);
      await ws.run([{ kernel: 'zeroArray', args: [p.padT, p.padT.length] }]);
    }
    // Accumulators start at zero; each adjoint's unpadSumRows clears what it read.
    await ws.run(Array.from({ length: ws.parallelism }, () => ({ kernel: 'zeroArray' as const, args: [p.accumulators, p.accumulators.length] })));
    return p;
  }

  private gridArgs(): number[] {
    const g = this.grid;
    return [g.nx, g.ny, g.dx, g.dy, this.x0, this.y0];
  }

  /** Byte address of chunk c's accumulator pair (acc, then accT at accLength floats on). */
  private accPtr(c: number): number {
    return this.accumulators.ptr + c * 2 * this.accLength * 4;
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
   * image = A^T sino over views [view0, view1) (default all). The views are split into a fixed
   * number of chunks (adjoint-chunks.ts), each accumulated on its own and summed in chunk order,
   * so the result is the same to the bit for any number of workers up to that count. The sum
   * runs by image rows on all workers when they share memory, else on the host.
   */
  async adjoint(sino: Buf, image: Buf, view0 = 0, view1 = this.nViews): Promise<void> {
    const { nx, ny } = this.grid;
    const plan = planAdjointChunks(view1 - view0, adjointChunkCount(this.ws.parallelism), this.ws.parallelism);
    for (const batch of plan.batches) {
      await this.ws.run(batch.map((c, w) => (c < 0 ? NO_OP : this.adjointPart(sino, view0 + plan.views[c][0], view0 + plan.views[c][1], c, w))));
    }
    const count = plan.views.length;
    if (this.ws.sharedMemory) {
      await this.ws.run(
        splitRange(ny, this.ws.parallelism).map(([a, b]) => ({
          kernel: 'unpadSumRows' as const,
          args: [this.accTable, count, nx, ny, a, b, image],
          writes: [{ buf: image, start: a * nx, length: (b - a) * nx }],
        })),
      );
      return;
    }
    // Private memories: each worker unpads its chunks; the host adds them in chunk order
    // (f32 additions, as unpadSumRows does).
    for (const batch of plan.batches) {
      await this.ws.run(batch.map((c) => (c < 0 ? NO_OP : {
        kernel: 'unpadSumRows' as const,
        args: [this.accTable.ptr + 8 * c, 1, nx, ny, 0, ny, this.partials[c]],
      })));
    }
    const sum = new Float32Array(nx * ny);
    for (let c = 0; c < count; c++) {
      const part = await this.ws.read(this.partials[c], 0, nx * ny, plan.owner[c]);
      for (let k = 0; k < sum.length; k++) sum[k] += part[k];
    }
    await this.ws.write(image, sum);
  }

  /** Worker w accumulates A^T sino over views [v0, v1) into chunk c's accumulators. */
  private adjointPart(sino: Buf, v0: number, v1: number, c: number, w: number): Part {
    const acc = this.accPtr(c);
    return {
      kernel: 'josephAdjoint2d',
      args: [acc, acc + this.accLength * 4, ...this.gridArgs(), this.views, this.kind, v0, v1, this.nCh, this.u0, this.pitch, sino, this.tables[w]],
    };
  }
}

/** A part that does nothing (for workers without work in a batch). */
const NO_OP: Part = { kernel: 'zeroArray', args: [0, 0] };
