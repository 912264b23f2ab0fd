// Knowledge checked against a reconstruction: every known region covers pixels of the grid,
// lies inside the measured field of view and does not contradict another; the outline encloses
// the measured field. Returns what the methods use: per-region coverage and values in mu.
import { InputError } from '../errors';
import type { ImageGrid } from '../image';
import type { VolumeGrid } from '../volume';
import { describeOutline, describeRegion } from './describe';
import { outlineContains, outlineMask, regionCoverage, type MaskInputs } from './raster';
import type { Knowledge, KnownRegion, Outline } from './types';

/** A known region on a grid. */
export interface PlacedRegion {
  region: KnownRegion;
  /** For messages and reports: "known region 1 (circle at ...)". */
  name: string;
  /** Coverage (0..1) per pixel or voxel of the grid. */
  coverage: Float32Array;
  /** The region's value as attenuation, 1/mm. */
  mu: number;
  /** Pixels (or voxels) it covers, counting partial ones by their share. */
  area: number;
}

export interface PlacedKnowledge {
  regions: PlacedRegion[];
  /** 1 inside the outline; absent without one. */
  outline?: Uint8Array;
}

export interface KnowledgeContext {
  grid: ImageGrid | VolumeGrid;
  /** The measured field of view's radius about the isocentre, mm. */
  fovRadius: number;
  /** mu of water, 1/mm: known values are in HU. */
  muWater?: number;
  masks?: MaskInputs;
  /**
   * A reconstruction on `grid` (mu, e.g. FBP with water extension): when given, the outline may
   * leave out parts of the field of view where this image shows air (a field of view larger than
   * the object), and is refused only where it leaves out the object.
   */
  image?: Float32Array;
}

/** HU -> mu (ICRP 129: HU = 1000 (mu - mu_water) / mu_water). */
export function huToMu(hu: number, muWater: number): number {
  return muWater * (1 + hu / 1000);
}

/** Share of pixels of a region that lie outside the disk of radius `fov` about the isocentre. */
function outsideFov(coverage: Float32Array, g: ImageGrid | VolumeGrid, fov: number): number {
  const plane = g.nx * g.ny;
  const x0 = g.cx - ((g.nx - 1) / 2) * g.dx, y0 = g.cy - ((g.ny - 1) / 2) * g.dy;
  const margin = Math.hypot(g.dx, g.dy) / 2;
  let all = 0, out = 0;
  for (let q = 0; q < coverage.length; q++) {
    const c = coverage[q];
    if (c === 0) continue;
    const p = q % plane;
    const x = x0 + (p % g.nx) * g.dx, y = y0 + Math.floor(p / g.nx) * g.dy;
    all += c;
    if (Math.hypot(x, y) > fov + margin) out += c;
  }
  return all > 0 ? out / all : 0;
}

function placeRegion(region: KnownRegion, index: number, ctx: KnowledgeContext): PlacedRegion {
  const name = describeRegion(region, index);
  if (ctx.muWater === undefined) throw new InputError(`${name}: known values are in HU, and the scan has no mu of water to turn them into attenuation: calibrate the scan first`);
  const coverage = regionCoverage(region, ctx.grid, ctx.masks, name);
  const area = coverage.reduce((s, v) => s + v, 0);
  if (!(area > 0)) throw new InputError(`${name}: covers no pixel of the reconstruction grid (it lies outside the grid, or over no data)`);
  const outside = outsideFov(coverage, ctx.grid, ctx.fovRadius);
  if (outside > 0) {
    throw new InputError(`${name}: ${(100 * outside).toFixed(0)}% of it lies outside the measured field of view (radius ${ctx.fovRadius.toFixed(1)} mm): a known region must lie inside it`);
  }
  return { region, name, coverage, mu: huToMu(region.hu, ctx.muWater), area };
}

/** Regions that share pixels must give the same value. */
function checkAgree(regions: PlacedRegion[]): void {
  for (let i = 0; i < regions.length; i++) {
    for (let j = i + 1; j < regions.length; j++) {
      const a = regions[i], b = regions[j];
      if (a.region.hu === b.region.hu) continue;
      const n = a.coverage.length;
      for (let q = 0; q < n; q++) {
        if (a.coverage[q] > 0 && b.coverage[q] > 0) throw new InputError(`${a.name} and ${b.name} overlap but give different values: they contradict each other`);
      }
    }
  }
}

/** The outline must enclose the measured field: share of a ring of points on the FOV circle outside it. */
function checkOutlineEnclosesFov(outline: Outline, mask: Uint8Array, ctx: KnowledgeContext): void {
  const fov = ctx.fovRadius;
  let outside = 0;
  const n = 720;
  const g = ctx.grid;
  for (let k = 0; k < n; k++) {
    const x = fov * Math.cos((2 * Math.PI * k) / n), y = fov * Math.sin((2 * Math.PI * k) / n);
    if (outline.shape !== 'mask') {
      if (!outlineContains(outline, x, y)) outside++;
      continue;
    }
    const i = Math.round((x - g.cx) / g.dx + (g.nx - 1) / 2), j = Math.round((y - g.cy) / g.dy + (g.ny - 1) / 2);
    if (i < 0 || j < 0 || i >= g.nx || j >= g.ny || !mask[j * g.nx + i]) outside++;
  }
  if (outside > n * 0.01) {
    throw new InputError(`${describeOutline(outline)}: ${((100 * outside) / n).toFixed(0)}% of the measured field of view's edge (radius ${fov.toFixed(1)} mm) lies outside it, but the scan measured the object there: the outline must enclose the measured field`);
  }
}

/** Reconstructed values above this fraction of mu_water (-500 HU) count as object (common practice for a body mask). */
const OBJECT_LEVEL = 0.5;

/**
 * With a reconstruction: the share of the field of view (within 95% of its radius, clear of the
 * truncation rim) that lies outside the outline where the image shows object must stay under 1%.
 */
function checkOutlineHoldsFovObject(outline: Outline, mask: Uint8Array, ctx: KnowledgeContext, image: Float32Array): void {
  const g = ctx.grid, plane = g.nx * g.ny;
  const x0 = g.cx - ((g.nx - 1) / 2) * g.dx, y0 = g.cy - ((g.ny - 1) / 2) * g.dy;
  const r = 0.95 * ctx.fovRadius, level = OBJECT_LEVEL * (ctx.muWater ?? 0);
  let inFov = 0, left = 0;
  for (let q = 0; q < image.length; q++) {
    const p = q % plane;
    if (Math.hypot(x0 + (p % g.nx) * g.dx, y0 + Math.floor(p / g.nx) * g.dy) > r) continue;
    inFov++;
    if (!mask[q] && image[q] > level) left++;
  }
  if (inFov && left > 0.01 * inFov) {
    throw new InputError(`${describeOutline(outline)}: ${((100 * left) / inFov).toFixed(0)}% of the measured field of view lies outside it where the data show the object (above -500 HU): the outline must enclose the object`);
  }
}

/** Places knowledge on a grid, or throws InputError naming the region at fault. */
export function placeKnowledge(k: Knowledge | undefined, ctx: KnowledgeContext): PlacedKnowledge {
  const regions = (k?.known ?? []).map((r, i) => placeRegion(r, i, ctx));
  checkAgree(regions);
  if (!k?.outline) return { regions };
  const mask = outlineMask(k.outline, ctx.grid, ctx.masks);
  if (!mask.some((v) => v)) throw new InputError(`${describeOutline(k.outline)}: covers no pixel of the reconstruction grid`);
  if (ctx.image) checkOutlineHoldsFovObject(k.outline, mask, ctx, ctx.image);
  else checkOutlineEnclosesFov(k.outline, mask, ctx);
  for (const r of regions) {
    for (let q = 0; q < r.coverage.length; q++) {
      if (r.coverage[q] >= 0.5 && !mask[q] && r.region.hu > -900) throw new InputError(`${r.name}: lies partly outside the ${describeOutline(k.outline!)}, where there is only air`);
    }
  }
  return { regions, outline: mask };
}
