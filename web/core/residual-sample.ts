// The data residual of a large volume, sampled: re-projecting a 512^3 volume onto every cell of
// a 400-view 1024 x 768 scan would take longer than the reconstruction and a gigabyte or two of
// memory. Above a size, the residual is taken on binned cells of every k-th view against the
// volume averaged over f x f x f voxels (binning both alike keeps them consistent: a binned cell
// sees the average of the line integrals, as the averaged voxels give). The sampled views are
// caught as the reconstruction reads them (ResidualTap), and the volume averaged as it leaves
// the engine (VolumeAverager), so neither is read twice nor held whole.
import { viewCount, type Geometry } from './geometry/types';
import type { ProjectionSource } from './projection-source';
import { viewSize } from './projection-source';
import { describeReduction, reducedGeometry, reduceViews, type Reduction } from './reduction';
import type { Scan } from './scan';
import { volumeOrigin, type Volume, type VolumeGrid } from './volume';
import type { VolumeInfo, VolumeSink } from './volume-sink';

/** Most voxels the re-projected volume may have (2^24: 64 MiB, a 256^3 volume). */
export const MAX_RESIDUAL_VOXELS = 2 ** 24;
/** Most rays compared (2^23: 32 MiB of projections). */
export const MAX_RESIDUAL_RAYS = 2 ** 23;

export interface ResidualPlan {
  /** Voxels averaged along each axis. */
  factor: number;
  /** What is done to the measured data (binning like the voxels, a view step). */
  reduction: Reduction;
  /** Empty when every ray is compared, else what was sampled (for the report). */
  note: string;
}

/** The residual's sampling for a volume on `grid` of a scan of geometry `g`. */
export function planResidual(grid: VolumeGrid, g: Geometry): ResidualPlan {
  let factor = 1;
  while (factor < 8 && (grid.nx * grid.ny * grid.nz) / factor ** 3 > MAX_RESIDUAL_VOXELS && Math.min(grid.nx, grid.ny, grid.nz) / (2 * factor) >= 8) factor *= 2;
  const d = g.detector;
  const bin = factor > 1 && Math.min(d.channels, d.rows) / factor >= 8 ? factor : 1;
  const rays = viewSize(g) / (bin * bin);
  const viewStep = Math.max(1, Math.ceil((viewCount(g) * rays) / MAX_RESIDUAL_RAYS));
  const reduction: Reduction = { ...(bin > 1 ? { bin } : {}), ...(viewStep > 1 ? { viewStep } : {}) };
  const parts = [describeReduction(reduction), factor > 1 ? `voxels averaged ${factor} x ${factor} x ${factor}` : ''].filter((s) => s && s !== 'none');
  return { factor, reduction, note: parts.length ? `sampled: ${parts.join('; ')}` : '' };
}

/**
 * Wraps a source so that the views the plan keeps are copied (reduced) as they are read. Every
 * view must be read once through the wrapper before measured() is called.
 */
export class ResidualTap {
  readonly source: ProjectionSource;
  private readonly data: Float32Array;
  private readonly seen: Uint8Array;
  readonly geometry: Geometry;

  constructor(inner: ProjectionSource, private readonly plan: ResidualPlan) {
    const g = inner.geometry;
    this.geometry = reducedGeometry(g, plan.reduction);
    const step = plan.reduction.viewStep ?? 1, frame = viewSize(g), out = viewSize(this.geometry);
    const rowsOnly: Reduction = { bin: plan.reduction.bin };
    this.data = new Float32Array(viewCount(this.geometry) * out);
    this.seen = new Uint8Array(viewCount(this.geometry));
    this.source = {
      ...inner,
      read: async (v0, v1) => {
        const d = await inner.read(v0, v1);
        for (let v = Math.ceil(v0 / step) * step; v < v1; v += step) {
          reduceViews(d.subarray((v - v0) * frame, (v - v0 + 1) * frame), g, rowsOnly, this.data.subarray((v / step) * out, (v / step + 1) * out));
          this.seen[v / step] = 1;
        }
        return d;
      },
    };
  }

  /** The sampled scan (throws when a view was not read). */
  measured(muWater?: number): Scan {
    const missing = this.seen.indexOf(0);
    if (missing >= 0) throw new Error(`residual sample: view ${missing * (this.plan.reduction.viewStep ?? 1)} was never read`);
    return { geometry: this.geometry, data: this.data, muWater };
  }
}

/** The grid of a volume averaged over factor^3 voxels (a ragged edge is dropped). */
export function averagedGrid(g: VolumeGrid, f: number): VolumeGrid {
  if (f === 1) return g;
  const { x0, y0, z0 } = volumeOrigin(g);
  const nx = Math.floor(g.nx / f), ny = Math.floor(g.ny / f), nz = Math.floor(g.nz / f);
  const centre = (o: number, d: number, n: number) => o + ((f - 1) / 2) * d + ((n - 1) / 2) * f * d;
  return { nx, ny, nz, dx: g.dx * f, dy: g.dy * f, dz: g.dz * f, cx: centre(x0, g.dx, nx), cy: centre(y0, g.dy, ny), cz: centre(z0, g.dz, nz) };
}

/** A sink that keeps the volume averaged over factor^3 voxels (the whole volume when factor is 1). */
export class VolumeAverager implements VolumeSink {
  readonly grid: VolumeGrid;
  private readonly data: Float32Array;

  constructor(private readonly info: VolumeInfo, private readonly factor: number) {
    this.grid = averagedGrid(info.grid, factor);
    this.data = new Float32Array(this.grid.nx * this.grid.ny * this.grid.nz);
  }

  async write(k0: number, slab: Float32Array): Promise<void> {
    const g = this.info.grid, a = this.grid, f = this.factor, nxy = g.nx * g.ny;
    const w = 1 / (f * f * f);
    for (let k = k0; k < k0 + slab.length / nxy; k++) {
      const kk = Math.floor(k / f);
      if (kk >= a.nz) continue;
      for (let j = 0; j < a.ny * f; j++) {
        const row = (k - k0) * nxy + j * g.nx, out = (kk * a.ny + Math.floor(j / f)) * a.nx;
        for (let i = 0; i < a.nx * f; i++) this.data[out + Math.floor(i / f)] += slab[row + i] * w;
      }
    }
  }

  volume(): Volume {
    return { ...this.info, grid: this.grid, data: this.data };
  }
}
