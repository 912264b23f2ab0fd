// How much memory a run will take, checked against a budget before any work starts: the page
// takes what the browser reports (or what the user set), the CLI --memory-limit. A run that does
// not fit is refused with the estimate and the binning (and the volume that goes with it) that
// would fit. The estimate counts the large arrays each stage lays out (engine buffers, the scan
// when it must be held whole, the volume, the data-residual sample) and adds a fixed allowance
// for the program itself; it is meant to err on the high side.
import { InputError } from './errors';
import { viewCount, type Geometry } from './geometry/types';
import { fovRadius } from './geometry/view-vectors';
import { isIterativeMethod } from './iterative/options';
import { PIXEL_WEIGHT_BUDGET } from './iterative/os-sart';
import { viewSize } from './projection-source';
import { usesKnowledge, type Recipe } from './recipe/recipe';
import { chooseVolumeGrid } from './recipe/volume-grid';
import { fdkChunkViews } from './recon/fdk';
import { backprojectorFloats } from './recon/fdk-backprojectors';
import { paddedLength } from './recon/filter-design';
import { Projector3d } from './recon/projector3d';
import { reducedGeometry } from './reduction';
import { MAX_RESIDUAL_RAYS, MAX_RESIDUAL_VOXELS } from './residual-sample';
import type { VolumeGrid } from './volume';

/** Where the run happens. */
export interface RunContext {
  workers: number;
  /** Workers share one engine memory (else each holds its own copy). */
  sharedMemory: boolean;
  /** The scan is already held whole in memory (the CLI read it at once). */
  scanInMemory?: boolean;
  /** The page stores the volume and checks it against the data (the residual sample). */
  storesResult?: boolean;
  /**
   * Iterative methods: every subset's pixel weights are held (else only PIXEL_WEIGHT_BUDGET
   * floats of them, and the rest are recomputed at each step: one more backprojection a step).
   */
  keepPixelWeights?: boolean;
}

export interface MemoryEstimate {
  bytes: number;
  /** What the bytes are for, largest first. */
  parts: Array<[string, number]>;
  /** The volume the run would make (cone-beam scans). */
  grid?: VolumeGrid;
  /** Iterative methods: floats the pixel weights may hold within the budget (RecipeInputs.pixelWeightFloats). */
  pixelWeightFloats?: number;
}

/** The program, the engine module and the workers themselves (common practice: measured idle footprint, rounded up). */
export const BASE_BYTES = 200 * 2 ** 20;

const F = 4;

/** The volume a cone-beam recipe makes (an estimate when the recipe leaves it to the scan: the FOV sets the voxel size). */
export function estimatedGrid(g: Geometry, recipe: Recipe): VolumeGrid {
  return chooseVolumeGrid(g, recipe.grid, recipe.volume, fovRadius(g));
}

/** Peak memory of running `recipe` on a scan of geometry `g` (after any reduction the recipe asks for). */
export function estimateRun(g0: Geometry, recipe: Recipe, ctx: RunContext): MemoryEstimate {
  const g = reducedGeometry(g0, recipe.reduce ?? {});
  const parts: Array<[string, number]> = [['program and workers', BASE_BYTES]];
  const scanBytes = viewCount(g) * viewSize(g) * F;
  const copies = ctx.sharedMemory ? 1 : ctx.workers;
  if (ctx.scanInMemory) parts.push(['the scan, read whole', scanBytes]);
  if (g.kind !== 'cone') {
    if (!ctx.scanInMemory) parts.push(['the scan', scanBytes]);
    const n = (recipe.grid?.size ?? 512) ** 2;
    parts.push(['engine buffers', copies * (isIterativeMethod(recipe.method) ? 5 * scanBytes + 12 * n * F : 2 * scanBytes + 4 * n * F)]);
    return total(parts);
  }
  const grid = estimatedGrid(g, recipe);
  const voxels = grid.nx * grid.ny * grid.nz;
  if (isIterativeMethod(recipe.method)) {
    if (!ctx.scanInMemory) parts.push(['the scan, read whole', scanBytes]);
    parts.push(['data to fit and weights (held by the program)', 2 * scanBytes]);
    const projector = Projector3d.floats(grid, g.detector.channels, g.detector.rows, ctx.workers);
    const subsets = Math.min(recipe.subsets ?? 20, viewCount(g));
    const pixelWeights = ctx.keepPixelWeights ? subsets * voxels : Math.min(subsets * voxels, PIXEL_WEIGHT_BUDGET);
    parts.push(['engine: projections, weights, padded volumes', copies * (4 * scanBytes + (projector + pixelWeights + 8 * voxels) * F)]);
    parts.push(['the volume', 2 * voxels * F]);
    if (recipe.method === 'prior') parts.push(['the prior (an FDK volume)', voxels * F]);
  } else {
    const nCh = g.detector.channels, nRows = g.detector.rows;
    const extend = recipe.extend && recipe.extend !== 'none';
    // Truncation correction plans on the whole scan and extends each row (about half a detector).
    const nChF = extend ? Math.ceil(1.5 * nCh) : nCh;
    if (extend && !ctx.scanInMemory) parts.push(['the scan, read whole (truncation correction)', scanBytes]);
    if (usesKnowledge(recipe)) {
      // FDK before and after the fit, each volume held whole, then both re-projected against the data.
      const projector = Projector3d.floats(grid, nCh, nRows, ctx.workers);
      parts.push(['volumes before and after the knowledge', 2 * voxels * F]);
      parts.push(['engine: residual projections, padded volumes', copies * (scanBytes + (projector + voxels) * F)]);
      parts.push(['re-projected data', scanBytes]);
    }
    const chunk = fdkChunkViews(nChF, nRows, viewCount(g), ctx.workers);
    const engine = backprojectorFloats('axial', grid, nChF, nRows, chunk, ctx.workers) + chunk * nRows * (nCh + nChF)
      + viewCount(g) * nChF + 4 * paddedLength(nChF) * ctx.workers;
    parts.push(['engine: volume, filtered views', copies * engine * F]);
    parts.push(['views in flight', 3 * chunk * viewSize(g) * F]);
  }
  if (ctx.storesResult) {
    parts.push(['data-residual sample', (Math.min(MAX_RESIDUAL_RAYS, viewCount(g) * viewSize(g)) + 3 * Math.min(MAX_RESIDUAL_VOXELS, voxels)) * F]);
    parts.push(['slabs on their way to storage', 2 * 16 * 2 ** 20]);
  } else {
    parts.push(['slabs on their way out', 2 * 16 * 2 ** 20]);
  }
  return { ...total(parts), grid };
}

/**
 * Largest engine memory planned: the 4 GiB a 32-bit WebAssembly memory addresses (65536 pages
 * of 64 KiB, WebAssembly Core Specification 1.0, 2.5.4), less room for the module's own data.
 * (Runs past 2 GiB once faulted: the layout's 16-byte rounding was bitwise, 32-bit in
 * JavaScript, and turned addresses past 2^31 negative; workspace.ts now rounds arithmetically.)
 */
const MAX_ENGINE_BYTES = 2 ** 32 - 2 ** 26;

/** The estimate's engine part (the parts named "engine..."). */
function engineBytes(e: MemoryEstimate): number {
  return e.parts.filter(([what]) => what.startsWith('engine')).reduce((sum, [, b]) => sum + b, 0);
}

function total(parts: Array<[string, number]>): MemoryEstimate {
  const sorted = [...parts].sort((a, b) => b[1] - a[1]);
  return { bytes: sorted.reduce((s, [, b]) => s + b, 0), parts: sorted };
}

/** 1.4 GB, 850 MB (powers of 1000, as browsers and operating systems report memory). */
export function showBytes(n: number): string {
  return n >= 1e9 ? `${(n / 1e9).toFixed(1)} GB` : `${Math.round(n / 1e6)} MB`;
}

/** The recipe with the detector binned `bin` x `bin` and its volume coarsened alike. */
function binned(recipe: Recipe, g: Geometry, bin: number): Recipe {
  const grid = recipe.grid ?? (g.kind === 'cone' ? (() => {
    const e = estimatedGrid(g, recipe);
    return { size: e.nx, pixel: e.dx };
  })() : undefined);
  const volume = recipe.volume ?? (g.kind === 'cone' ? (() => {
    const e = estimatedGrid(g, recipe);
    return { slices: e.nz, spacing: e.dz };
  })() : undefined);
  return {
    ...recipe,
    reduce: { ...recipe.reduce, bin: (recipe.reduce?.bin ?? 1) * bin },
    ...(grid ? { grid: { size: Math.max(8, Math.round(grid.size / bin)), pixel: grid.pixel * bin } } : {}),
    ...(volume ? { volume: { slices: Math.max(1, Math.round(volume.slices / bin)), spacing: volume.spacing * bin } } : {}),
  };
}

function describeRecipeSize(r: Recipe, g: Geometry): string {
  const bin = r.reduce?.bin ?? 1;
  const grid = g.kind === 'cone' ? estimatedGrid(reducedGeometry(g, r.reduce ?? {}), r) : undefined;
  const volume = grid ? ` and a ${grid.nx} x ${grid.ny} x ${grid.nz} volume of ${grid.dx.toFixed(2)} mm voxels` : r.grid ? ` and a ${r.grid.size} x ${r.grid.size} grid of ${r.grid.pixel} mm` : '';
  return `${bin} x ${bin} detector binning${volume}`;
}

/**
 * Throws InputError when the run needs more than `budget` bytes: the message gives the estimate,
 * the budget, where it comes from, and the binning (with the volume coarsened alike) that fits.
 */
export function checkMemoryBudget(g: Geometry, recipe: Recipe, ctx: RunContext, budget: number, budgetSource: string): MemoryEstimate {
  const copies = ctx.sharedMemory ? 1 : ctx.workers;
  // One engine (each worker's, with private memories) addresses at most MAX_ENGINE_BYTES.
  const fits = (e: MemoryEstimate) => e.bytes <= budget && engineBytes(e) / copies <= MAX_ENGINE_BYTES;
  if (isIterativeMethod(recipe.method)) {
    // Holding every subset's pixel weights spares a backprojection per step: done when it fits.
    const keep = estimateRun(g, recipe, { ...ctx, keepPixelWeights: true });
    if (fits(keep)) return { ...keep, pixelWeightFloats: Number.MAX_SAFE_INTEGER };
  }
  const need = estimateRun(g, recipe, ctx);
  if (fits(need)) return isIterativeMethod(recipe.method) ? { ...need, pixelWeightFloats: PIXEL_WEIGHT_BUDGET } : need;
  const largest = need.parts.slice(0, 2).map(([what, b]) => `${what} ${showBytes(b)}`).join(', ');
  let advice = 'no detector binning brings it under the budget: choose a smaller volume or fewer views';
  for (const bin of [2, 4, 8]) {
    const d = g.detector;
    if (d.channels / ((recipe.reduce?.bin ?? 1) * bin) < 8 || (g.kind === 'cone' && d.rows / ((recipe.reduce?.bin ?? 1) * bin) < 2)) break;
    const r = binned(recipe, g, bin);
    const e = estimateRun(g, r, ctx);
    if (fits(e)) {
      advice = `with ${describeRecipeSize(r, g)} it needs about ${showBytes(e.bytes)}`;
      break;
    }
  }
  if (need.bytes <= budget) {
    throw new InputError(`memory: this run needs about ${showBytes(engineBytes(need) / copies)} of engine memory (${largest}), more than the ${showBytes(MAX_ENGINE_BYTES)} one WebAssembly engine can address; ${advice}`);
  }
  throw new InputError(`memory: this run needs about ${showBytes(need.bytes)} (${largest}), more than the budget of ${showBytes(budget)} (${budgetSource}); ${advice}`);
}
