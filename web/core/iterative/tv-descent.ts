// Steepest descent on the (weighted) total variation, as in the TV phase of ASD-POCS (Sidky &
// Pan 2008): N steps of fixed length along the normalized TV gradient, restricted to the
// support. Reweighted TV refreshes its weights 1 / (|grad f| + eps) from the current image
// (Candes, Wakin & Boyd 2008). Kernels: assembly/tv.ts for images, assembly/tv3d.ts
// (6-neighbour) for volumes, split by lines of x (space.ts).
import type { Buf, Part, Workspace } from '../engine/workspace';
import { throwIfCancelled } from '../errors';
import type { BandOps } from './image-ops';
import { gridBands, gridSize, isVolumeGrid, type ReconGrid } from './space';

/**
 * Smoothing delta^2 in |grad f| = sqrt(dx^2 + dy^2 + delta^2), (1/mm)^2: delta = 1e-5 /mm is
 * about 0.5 HU per pixel, far below edges and noise (Sidky & Pan smooth the TV gradient with a
 * small epsilon of the same kind; from memory).
 */
export const TV_SMOOTHING = 1e-10;

export class TvDescent {
  private readonly g: Buf;
  private readonly grad: Buf;
  private readonly weights: Buf;
  private readonly start: Buf;
  private readonly rows: BandOps;

  private constructor(ws: Workspace, private readonly grid: ReconGrid, private readonly support: Buf) {
    const n = gridSize(grid);
    this.g = ws.alloc('tvScale', n);
    this.grad = ws.alloc('tvGradient', n);
    this.weights = ws.alloc('tvWeights', n);
    this.start = ws.alloc('tvStart', n);
    this.rows = gridBands(ws, grid);
  }

  /** The grid's size arguments of the TV kernels: nx, ny (images) or nx, ny, nz (volumes). */
  private sizes(): number[] {
    const g = this.grid;
    return isVolumeGrid(g) ? [g.nx, g.ny, g.nz] : [g.nx, g.ny];
  }

  /** A TV kernel call on lines [a, b): the 2D kernel for images, its 3D twin for volumes. */
  private kernel(name: 'tvWeights' | 'tvScale' | 'tvGradient', before: Part['args'], a: number, b: number, after: Part['args']): Pick<Part, 'kernel' | 'args'> {
    const volume = isVolumeGrid(this.grid);
    const kernel = volume ? (({ tvWeights: 'tv3Weights', tvScale: 'tv3Scale', tvGradient: 'tv3Gradient' } as const)[name]) : name;
    return { kernel, args: [...before, ...this.sizes(), a, b, ...after] };
  }

  /** Relative step per pixel (absent: 1 in the support). */
  private scale?: Buf;

  /** Lays out the buffers; weights start at 1 (plain TV). */
  static async create(ws: Workspace, grid: ReconGrid, support: Buf, scale?: Buf): Promise<TvDescent> {
    const t = new TvDescent(ws, grid, support);
    t.scale = scale;
    await ws.write(t.weights, new Float32Array(gridSize(grid)).fill(1));
    return t;
  }

  /** Reweighted TV: w = 1 / (|grad x| + eps). */
  refreshWeights(x: Buf, eps: number): Promise<number[]> {
    return this.rows.run((from, to, a, b) => ({
      ...this.kernel('tvWeights', [x, this.weights], a, b, [eps]),
      writes: [{ buf: this.weights, start: from, length: to - from }],
    }));
  }

  /** The plain (unweighted) TV of x, sum over pixels of |grad x|, 1/mm. */
  value(x: Buf): Promise<number> {
    return this.rows.total((from, to, a, b) => ({
      ...this.kernel('tvScale', [x, this.weights, this.g], a, b, [TV_SMOOTHING, this.rows.sums]),
      writes: [{ buf: this.g, start: from, length: to - from }],
    }));
  }

  /** The gradient of the (weighted) TV at x into `grad`; returns its norm. */
  private async gradient(x: Buf): Promise<number> {
    await this.value(x);
    const sq = await this.rows.total((from, to, a, b) => ({
      ...this.kernel('tvGradient', [x, this.g, this.support, this.grad], a, b, [this.rows.sums]),
      writes: [{ buf: this.grad, start: from, length: to - from }],
    }));
    return Math.sqrt(sq);
  }

  /**
   * `steps` steps x <- x - stepLength * grad / |grad|. Returns how far x moved in all
   * (Euclidean norm of the change), for ASD-POCS's step control.
   */
  async descend(x: Buf, steps: number, stepLength: number, signal?: AbortSignal): Promise<number> {
    await this.rows.copy(this.start, x);
    for (let n = 0; n < steps; n++) {
      throwIfCancelled(signal);
      const norm = await this.gradient(x);
      if (!(norm > 0)) break;
      if (this.scale) await this.rows.multiply(this.grad, this.scale);
      await this.rows.addScaled(x, this.grad, -stepLength / norm);
    }
    return this.rows.distance(x, this.start);
  }
}
