// Comparing a reconstructed volume with a reference volume: RMSE and PSNR over the voxels of a
// region, SSIM (Wang et al. 2004, metrics.ts) computed slice by slice in axial slices and
// averaged over the region's voxels; regions: the whole volume, the object, and inside / outside
// the FOV cylinder (radius fovRadius, half height fovHalfHeight about the isocentre, as the
// volume records them). Optionally the same figures for every axial slice. The same function
// serves the CLI and the page.
import type { RegionFigures } from './compare';
import { InputError } from './errors';
import { ssimBorder, ssimMap } from './metrics';
import { checkOverlap } from './overlap';
import { resampleTrilinear, sameVolumeGrid } from './resample-volume';
import { volumeOrigin, type Volume, type VolumeGrid } from './volume';
import type { VolumeInfo } from './volume-sink';

export type VolumeRegion = 'volume' | 'object' | 'insideFov' | 'outsideFov';

export interface SliceFigures {
  /** Slice index and its z, mm. */
  k: number;
  z: number;
  regions: Record<VolumeRegion, RegionFigures | null>;
}

export interface VolumeComparison {
  /** 'HU' when mu_water is known, else '1/mm'. */
  unit: 'HU' | '1/mm';
  regions: Record<VolumeRegion, RegionFigures | null>;
  /** True when the reference was resampled onto the volume's grid. */
  resampled: boolean;
  /** Fraction of the volume the reference covers (overlap.ts). */
  overlap: number;
  fovRadiusMm: number | null;
  fovHalfHeightMm: number | null;
  /** Per axial slice, when asked for. */
  slices?: SliceFigures[];
  notes: string[];
}

export interface VolumeCompareOptions {
  /** FOV cylinder radius, mm (absent: no inside / outside split). */
  fovRadius?: number;
  /** FOV cylinder half height, mm (absent: the cylinder spans every slice). */
  fovHalfHeight?: number;
  perSlice?: boolean;
}

/** Reference values above this fraction of mu_water (or of the reference maximum) count as object (as compare.ts). */
const OBJECT_THRESHOLD = 0.05;

const REGIONS: VolumeRegion[] = ['volume', 'object', 'insideFov', 'outsideFov'];

/** Running sums of one region. */
class Sums {
  n = 0;
  se = 0;
  ssim = 0;
  /** Voxels with an SSIM value (the unmasked volume leaves out each slice's border). */
  nSsim = 0;
  add(d: number) {
    this.n++;
    this.se += d * d;
  }
  figures(range: number): RegionFigures | null {
    if (!this.n) return null;
    const mse = this.se / this.n;
    return { pixels: this.n, rmse: Math.sqrt(mse), psnr: 10 * Math.log10((range * range) / mse), ssim: this.nSsim ? this.ssim / this.nSsim : NaN };
  }
}

/** Compares `volume` with `reference` (both mu); the reference is resampled (trilinear) onto the volume's grid when they differ. */
export function compareVolumes(volume: Volume, reference: Volume, options: VolumeCompareOptions = {}): VolumeComparison {
  let bad = 0;
  for (const v of volume.data) if (!Number.isFinite(v)) bad++;
  if (bad) throw new InputError(`volume: ${bad} voxels are not finite numbers (NaN or infinity); the comparison would be meaningless`);
  const c = new VolumeComparer(volume, reference, options);
  c.addSlices(0, volume.data);
  return c.result();
}

/**
 * compareVolumes for a volume that arrives slab by slab (whole axial slices, in any order, each
 * once): the reference is held whole (resampled onto the volume's grid), the volume never.
 */
export class VolumeComparer {
  private readonly c: SliceContext;
  private readonly notes: string[] = [];
  private readonly resampled: boolean;
  private readonly overlap: number;
  private readonly total = REGIONS.map(() => new Sums());
  private readonly slices: SliceFigures[] = [];
  private bad = 0;
  private readonly muWater?: number;

  constructor(volume: VolumeInfo, reference: Volume, private readonly options: VolumeCompareOptions = {}) {
    const g = volume.grid;
    const { overlap, note } = checkOverlap(g, reference.grid, 'volume');
    this.overlap = overlap;
    if (note) this.notes.push(note);
    this.resampled = !sameVolumeGrid(g, reference.grid);
    const ref = this.resampled ? resampleTrilinear(reference.data, reference.grid, g) : reference.data;
    if (this.resampled) this.notes.push('reference resampled (trilinear) onto the volume grid');
    this.muWater = volume.muWater ?? reference.muWater;
    const scale = this.muWater ? 1000 / this.muWater : 1;
    let lo = Infinity, hi = -Infinity;
    for (let i = 0; i < ref.length; i++) {
      lo = Math.min(lo, ref[i]);
      hi = Math.max(hi, ref[i]);
    }
    this.c = {
      g, ref, offset: this.muWater ?? 0, scale, range: (hi - lo) * scale || 1,
      threshold: OBJECT_THRESHOLD * (this.muWater ?? hi), fov: options.fovRadius, fovH: options.fovHalfHeight,
    };
    if (this.c.fov !== undefined && this.c.fovH === undefined) this.notes.push('no FOV half height known: the FOV cylinder spans every slice');
  }

  /** Adds slices [k0, k0 + slab.length / (nx ny)). */
  addSlices(k0: number, slab: Float32Array): void {
    const g = this.c.g, nxy = g.nx * g.ny;
    for (let i = 0; i < slab.length; i++) if (!Number.isFinite(slab[i])) this.bad++;
    if (this.bad) return;
    for (let k = k0; k < k0 + slab.length / nxy; k++) {
      const here = addSlice(this.c, k, slab.subarray((k - k0) * nxy, (k - k0 + 1) * nxy), this.total);
      if (this.options.perSlice) this.slices.push({ k, z: volumeOrigin(g).z0 + k * g.dz, regions: figuresOf(here, this.c.range) });
    }
  }

  /** The figures; throws InputError when a voxel was not a finite number. */
  result(): VolumeComparison {
    if (this.bad) throw new InputError(`volume: ${this.bad} voxels are not finite numbers (NaN or infinity); the comparison would be meaningless`);
    return {
      unit: this.muWater ? 'HU' : '1/mm',
      regions: figuresOf(this.total, this.c.range),
      resampled: this.resampled,
      overlap: this.overlap,
      fovRadiusMm: this.c.fov ?? null,
      fovHalfHeightMm: this.c.fovH ?? null,
      ...(this.options.perSlice ? { slices: [...this.slices].sort((p, q) => p.k - q.k) } : {}),
      notes: this.notes,
    };
  }
}

interface SliceContext {
  g: VolumeGrid;
  ref: Float32Array;
  /** Values shown as (mu - offset) * scale (HU when mu_water is known). */
  offset: number;
  scale: number;
  range: number;
  /** mu above which a reference voxel belongs to the object. */
  threshold: number;
  fov: number | undefined;
  fovH: number | undefined;
}

/** Adds axial slice k (its voxels in `slice`) to the running totals; returns the slice's own sums. */
function addSlice(c: SliceContext, k: number, slice: Float32Array, total: Sums[]): Sums[] {
  const { g, fov } = c;
  const nxy = g.nx * g.ny, border = ssimBorder();
  const { x0, y0, z0 } = volumeOrigin(g);
  const inHeight = c.fovH === undefined || Math.abs(z0 + k * g.dz) <= c.fovH;
  const a = new Float32Array(nxy), b = new Float32Array(nxy);
  for (let i = 0; i < nxy; i++) {
    a[i] = (slice[i] - c.offset) * c.scale;
    b[i] = (c.ref[k * nxy + i] - c.offset) * c.scale;
  }
  const map = ssimMap(a, b, g.nx, g.ny, c.range);
  const here = REGIONS.map(() => new Sums());
  for (let j = 0; j < g.ny; j++) {
    const y = y0 + j * g.dy;
    for (let i = 0; i < g.nx; i++) {
      const at = j * g.nx + i;
      const object = c.ref[k * nxy + at] > c.threshold;
      const inside = fov !== undefined && inHeight && Math.hypot(x0 + i * g.dx, y) <= fov;
      const edge = i < border || j < border || i >= g.nx - border || j >= g.ny - border;
      const member = [true, object, object && inside, object && fov !== undefined && !inside];
      const d = a[at] - b[at];
      for (let r = 0; r < REGIONS.length; r++) {
        if (!member[r]) continue;
        for (const s of [total[r], here[r]]) {
          s.add(d);
          if (r > 0 || !edge) {
            s.ssim += map[at];
            s.nSsim++;
          }
        }
      }
    }
  }
  return here;
}

function figuresOf(sums: Sums[], range: number): Record<VolumeRegion, RegionFigures | null> {
  return Object.fromEntries(REGIONS.map((r, i) => [r, sums[i].figures(range)])) as Record<VolumeRegion, RegionFigures | null>;
}
