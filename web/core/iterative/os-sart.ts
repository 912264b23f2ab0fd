// Ordered-subsets SART (Andersen & Kak 1984; assembly/sart.ts has the update formula) over a
// workspace: the projector runs on the permuted, extended geometry so each subset is a view
// range; ray weights w_i / (A 1)_i and, per subset, pixel weights 1 / (A_S^T w)_j are computed
// once at setup. On volumes A^T is the voxel-driven backprojector close to it
// (Projector3d.backprojectVoxels), in the update and the pixel weights alike. Rays with data
// weight 0 (unmeasured channels) carry no data term. Images (2D scans) and volumes (cone-beam
// scans, each view `rows` detector rows) alike (space.ts).
import type { Buf, Workspace } from '../engine/workspace';
import { throwIfCancelled } from '../errors';
import type { Geometry } from '../geometry/types';
import type { RunHooks } from '../run-hooks';
import { splitRange } from '../recon/split';
import { addLineSums, BandOps, lineSumRange } from './image-ops';
import { createProjector, gridBands, gridSize, type ReconGrid, type ViewProjector } from './space';
import type { SubsetPlan } from './subsets';

/** Pixel weights of all subsets are kept when they fit in this many floats; else recomputed per step. */
export const PIXEL_WEIGHT_BUDGET = 48 * 2 ** 20;

export interface SartInputs {
  grid: ReconGrid;
  /** Extended geometry with views in subset order. */
  geometry: Geometry;
  plan: SubsetPlan;
  /** Data to fit, [view][row][channel] in permuted order. */
  target: Float32Array;
  /** Per-ray data weight (0: no data term). */
  dataWeight: Float32Array;
  /** 1 inside the reconstruction support, 0 outside. */
  support: Float32Array;
  /** Channels [k0, k1) of every row hold measured data (for the residual). */
  measured: [number, number];
  /** Floats the per-subset pixel weights may take (default PIXEL_WEIGHT_BUDGET). */
  pixelWeightBudget?: number;
  /** Relative step per pixel (default 1 everywhere): scales the pixel weights. */
  stepScale?: Float32Array;
}

export class OsSart {
  readonly projector: ViewProjector;
  readonly nCh: number;
  readonly nViews: number;
  /** Detector rows per view (1 for 2D scans). */
  readonly rows: number;
  readonly support: Buf;
  /** support x relative step: the numerator of the pixel weights. */
  readonly stepScale: Buf;
  readonly target: Buf;
  /** Scratch sinogram: projections, then corrections. */
  readonly corr: Buf;
  readonly back: Buf;
  private readonly dataWeight: Buf;
  private readonly rayWeight: Buf;
  private readonly pixelWeights: Buf[];
  /** Measured residual of each row of each view (f64) from the last step that visited it. */
  private readonly viewSums: Buf;
  private readonly image: BandOps;
  private readonly ws: Workspace;

  private constructor(ws: Workspace, projector: ViewProjector, rows: number, private readonly inputs: SartInputs) {
    const { grid, plan } = inputs;
    this.ws = ws;
    this.projector = projector;
    this.nCh = projector.nCh;
    this.nViews = projector.nViews;
    this.rows = rows;
    const nSino = this.nViews * rows * this.nCh;
    const nPix = gridSize(grid);
    this.support = ws.alloc('support', nPix);
    this.stepScale = ws.alloc('stepScale', nPix);
    this.back = ws.alloc('back', nPix);
    this.target = ws.alloc('target', nSino);
    this.dataWeight = ws.alloc('dataWeight', nSino);
    this.rayWeight = ws.alloc('rayWeight', nSino);
    this.corr = ws.alloc('corrections', nSino);
    this.viewSums = ws.alloc('viewResiduals', 2 * this.nViews * rows);
    const subsets = plan.starts.length - 1;
    const keepAll = subsets * nPix <= (inputs.pixelWeightBudget ?? PIXEL_WEIGHT_BUDGET);
    this.pixelWeights = Array.from({ length: keepAll ? subsets : 1 }, (_, q) => ws.alloc(`pixelWeight${q}`, nPix));
    this.image = gridBands(ws, grid);
  }

  /** Lays out the buffers and computes the ray weights (and the pixel weights when they fit). */
  static async create(ws: Workspace, inputs: SartInputs, hooks: RunHooks = {}): Promise<OsSart> {
    const { projector, rows } = await createProjector(ws, inputs.grid, inputs.geometry);
    const s = new OsSart(ws, projector, rows, inputs);
    await ws.write(s.support, inputs.support);
    await ws.write(s.stepScale, inputs.stepScale ? inputs.support.map((v, i) => v * inputs.stepScale![i]) : inputs.support);
    await ws.write(s.target, inputs.target);
    await ws.write(s.dataWeight, inputs.dataWeight);
    // Row sums A 1 over the support; a ray crossing less than a tenth of a pixel is dropped.
    await projector.forward(s.support, s.corr, 0, projector.nViews, hooks.signal);
    const minRow = 0.1 * Math.min(inputs.grid.dx, inputs.grid.dy);
    await new BandOps(ws, s.nCh, s.nViews * rows).run((from, to) => ({
      kernel: 'sartWeights',
      args: [s.corr, s.dataWeight, s.rayWeight, from, to, minRow],
      writes: [{ buf: s.rayWeight, start: from, length: to - from }],
    }));
    await s.preparePixelWeights(hooks);
    return s;
  }

  /** Computes the pixel weights of every subset when they are kept (else each step does). */
  private async preparePixelWeights(hooks: RunHooks): Promise<void> {
    if (this.pixelWeights.length === 1 && this.subsets > 1) return;
    for (let q = 0; q < this.subsets; q++) {
      throwIfCancelled(hooks.signal);
      await this.computePixelWeights(q, this.pixelWeights[q], hooks.signal);
      hooks.onProgress?.((q + 1) / this.subsets, `setup: weights of subset ${q + 1} of ${this.subsets}`);
    }
  }

  /** Changes the relative step per pixel (support x scale); the pixel weights follow. */
  async setStepScale(scale: Float32Array, hooks: RunHooks = {}): Promise<void> {
    await this.ws.write(this.stepScale, this.inputs.support.map((v, i) => v * scale[i]));
    await this.preparePixelWeights(hooks);
  }

  /** The update's backprojector: the voxel-driven one where the projector has it (volumes), else the adjoint. */
  private backproject(p: Buf, out: Buf, view0: number, view1: number, signal?: AbortSignal): Promise<void> {
    if (this.projector.backprojectVoxels) return this.projector.backprojectVoxels(p, out, view0, view1, signal);
    return this.projector.adjoint(p, out, view0, view1, signal);
  }

  get subsets(): number {
    return this.inputs.plan.starts.length - 1;
  }

  /** Pixel weights of subset q: support_j step_j / (A_S^T w)_j. */
  private async computePixelWeights(q: number, out: Buf, signal?: AbortSignal): Promise<void> {
    const { starts } = this.inputs.plan;
    const { dx, dy } = this.inputs.grid;
    await this.backproject(this.dataWeight, this.back, starts[q], starts[q + 1], signal);
    const minCol = 1e-3 * Math.min(dx, dy);
    await this.image.run((from, to) => ({
      kernel: 'sartWeights',
      args: [this.back, this.stepScale, out, from, to, minCol],
      writes: [{ buf: out, start: from, length: to - from }],
    }));
  }

  /**
   * One SART step on subset q: x += lambda * pixelWeight * A_S^T (rayWeight * (target - A_S x)),
   * then x = max(x, floor). Returns the squared residual on the measured channels of the
   * subset's views, as they were before the step. The correction kernel works on detector rows
   * (lines of nCh channels): view v holds lines [v rows, (v + 1) rows).
   */
  async step(x: Buf, q: number, lambda: number, floor: number, signal?: AbortSignal): Promise<number> {
    const [v0, v1] = [this.inputs.plan.starts[q], this.inputs.plan.starts[q + 1]];
    const [k0, k1] = this.inputs.measured;
    const r = this.rows;
    await this.projector.forward(x, this.corr, v0, v1, signal);
    await this.ws.run(splitRange(v1 - v0, this.ws.parallelism).map(([a, b]) => ({
      kernel: 'sartCorrection' as const,
      args: [this.corr, this.target, this.rayWeight, this.nCh, (v0 + a) * r, (v0 + b) * r, k0, k1, this.viewSums],
      writes: [{ buf: this.corr, start: (v0 + a) * r * this.nCh, length: (b - a) * r * this.nCh }, lineSumRange(this.viewSums, (v0 + a) * r, (v0 + b) * r)],
    })));
    const residual = await addLineSums(this.ws, this.viewSums, v0 * r, v1 * r);
    let weights = this.pixelWeights[0];
    if (this.pixelWeights.length > 1) weights = this.pixelWeights[q];
    else if (this.subsets > 1) await this.computePixelWeights(q, weights, signal);
    await this.backproject(this.corr, this.back, v0, v1, signal);
    await this.image.run((from, to) => ({
      kernel: 'sartUpdate',
      args: [x, this.back, weights, from, to, lambda, floor],
      writes: [{ buf: x, start: from, length: to - from }],
    }));
    return residual;
  }

  /** A full sweep over the subsets; returns the summed squared measured residual seen. */
  async sweep(x: Buf, lambda: number, floor: number, hooks: RunHooks, onStep?: (q: number) => void): Promise<number> {
    let sum = 0;
    for (let q = 0; q < this.subsets; q++) {
      throwIfCancelled(hooks.signal);
      sum += await this.step(x, q, lambda, floor, hooks.signal);
      onStep?.(q);
    }
    return sum;
  }
}
