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
import { volumeOrigin, type Volume } from './volume';

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
  const scale = muWater ? 1000 / muWater : 1, offset = muWater ?? 0;
  const unit = (x: number) => (x - offset) * scale;
  let lo = Infinity, hi = -Infinity, refMax = 0;
  for (let i = 0; i < ref.length; i++) {
    lo = Math.min(lo, ref[i]);
    hi = Math.max(hi, ref[i]);
  }
  refMax = hi;
  const range = (hi - lo) * scale || 1;
  const threshold = OBJECT_THRESHOLD * (muWater ?? refMax);
  const fov = options.fovRadius, fovH = options.fovHalfHeight;
  if (fov !== undefined && fovH === undefined) notes.push('no FOV half height known: the FOV cylinder spans every slice');

  const { x0, y0, z0 } = volumeOrigin(g);
  const nxy = g.nx * g.ny, border = ssimBorder();
  const total = REGIONS.map(() => new Sums());
  const slices: SliceFigures[] = [];
  const a = new Float32Array(nxy), b = new Float32Array(nxy);
  for (let k = 0; k < g.nz; k++) {
    const z = z0 + k * g.dz;
    const inHeight = fovH === undefined || Math.abs(z) <= fovH;
    for (let i = 0; i < nxy; i++) {
      a[i] = unit(volume.data[k * nxy + i]);
      b[i] = unit(ref[k * nxy + i]);
    }
    const map = ssimMap(a, b, g.nx, g.ny, range);
    const here = REGIONS.map(() => new Sums());
    for (let j = 0; j < g.ny; j++) {
      const y = y0 + j * g.dy;
      for (let i = 0; i < g.nx; i++) {
        const at = j * g.nx + i;
        const object = ref[k * nxy + at] > threshold;
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
    if (options.perSlice) slices.push({ k, z, regions: figuresOf(here, range) });
  }
  return {
    unit: muWater ? 'HU' : '1/mm',
    regions: figuresOf(total, range),
    resampled,
    overlap,
    fovRadiusMm: fov ?? null,
    fovHalfHeightMm: fovH ?? null,
    ...(options.perSlice ? { slices } : {}),
    notes,
  };
}

function figuresOf(sums: Sums[], range: number): Record<VolumeRegion, RegionFigures | null> {
  return Object.fromEntries(REGIONS.map((r, i) => [r, sums[i].figures(range)])) as Record<VolumeRegion, RegionFigures | null>;
}
