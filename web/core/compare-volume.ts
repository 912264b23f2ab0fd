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
  const g = volume.grid;
  const notes: string[] = [];
  let bad = 0;
  for (const v of volume.data) if (!Number.isFinite(v)) bad++;
  if (bad) throw new InputError(`volume: ${bad} voxels are not finite numbers (NaN or infinity); the comparison would be meaningless`);
  const { overlap, note } = checkOverlap(g, reference.grid, 'volume');
  if (note) notes.push(note);
  const resampled = !sameVolumeGrid(g, reference.grid);
  const ref = resampled ? resampleTrilinear(reference.data, reference.grid, g) : reference.data;
  if (resampled) notes.push('reference resampled (trilinear) onto the volume grid');
  const muWater = volume.muWater ?? reference.muWater;
  const scale = muWater ? 1000 / muWater : 1;
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < ref.length; i++) {
    lo = Math.min(lo, ref[i]);
    hi = Math.max(hi, ref[i]);
  }
  const c: SliceContext = {
    g, data: volume.data, ref, offset: muWater ?? 0, scale, range: (hi - lo) * scale || 1,
    threshold: OBJECT_THRESHOLD * (muWater ?? hi), fov: options.fovRadius, fovH: options.fovHalfHeight,
  };
  if (c.fov !== undefined && c.fovH === undefined) notes.push('no FOV half height known: the FOV cylinder spans every slice');
  const total = REGIONS.map(() => new Sums());
  const slices: SliceFigures[] = [];
  for (let k = 0; k < g.nz; k++) {
    const here = addSlice(c, k, total);
    if (options.perSlice) slices.push({ k, z: volumeOrigin(g).z0 + k * g.dz, regions: figuresOf(here, c.range) });
  }
  return {
    unit: muWater ? 'HU' : '1/mm',
    regions: figuresOf(total, c.range),
    resampled,
    overlap,
    fovRadiusMm: c.fov ?? null,
    fovHalfHeightMm: c.fovH ?? null,
    ...(options.perSlice ? { slices } : {}),
    notes,
  };
}

/** What every slice of a comparison shares: volumes (mu), HU scale, data range, object and FOV. */
interface SliceContext {
  g: VolumeGrid;
  data: Float32Array;
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

/** Adds axial slice k to the running totals; returns the slice's own sums. */
function addSlice(c: SliceContext, k: number, total: Sums[]): Sums[] {
  const { g, fov } = c;
  const nxy = g.nx * g.ny, border = ssimBorder();
  const { x0, y0, z0 } = volumeOrigin(g);
  const inHeight = c.fovH === undefined || Math.abs(z0 + k * g.dz) <= c.fovH;
  const a = new Float32Array(nxy), b = new Float32Array(nxy);
  for (let i = 0; i < nxy; i++) {
    a[i] = (c.data[k * nxy + i] - c.offset) * c.scale;
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
