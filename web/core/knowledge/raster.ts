// Knowledge drawn on a reconstruction grid: per-pixel coverage of a known region (0..1, from
// 4 x 4 sub-samples, so a small circle's area is right to a few percent) and the outline's
// inside mask. Volumes (VolumeGrid) repeat the plane per slice, limited to a circle's z slab.
import { InputError } from '../errors';
import { gridOrigin, type Image2D, type ImageGrid } from '../image';
import { resampleBilinear, sameGrid } from '../resample';
import { resampleTrilinear, sameVolumeGrid } from '../resample-volume';
import { volumeOrigin, type Volume, type VolumeGrid } from '../volume';
import type { KnownRegion, Outline } from './types';

/** Mask images by name (files on the command line, drawn or imported masks in the page). */
export type MaskInputs = Record<string, Image2D | Volume>;

const SUB = 4;

function isVolumeGrid(g: ImageGrid | VolumeGrid): g is VolumeGrid {
  return (g as VolumeGrid).nz !== undefined;
}

/** Coverage (0..1) of each pixel of a plane by `inside(x, y)`, from SUB x SUB sub-samples. */
function coverage(g: ImageGrid, inside: (x: number, y: number) => boolean, box?: [number, number, number, number]): Float32Array {
  const out = new Float32Array(g.nx * g.ny);
  const { x0, y0 } = gridOrigin(g);
  const [bx0, bx1, by0, by1] = box ?? [-Infinity, Infinity, -Infinity, Infinity];
  const i0 = Math.max(0, Math.floor((bx0 - x0) / g.dx)), i1 = Math.min(g.nx - 1, Math.ceil((bx1 - x0) / g.dx));
  const j0 = Math.max(0, Math.floor((by0 - y0) / g.dy)), j1 = Math.min(g.ny - 1, Math.ceil((by1 - y0) / g.dy));
  for (let j = j0; j <= j1; j++) {
    for (let i = i0; i <= i1; i++) {
      let n = 0;
      for (let b = 0; b < SUB; b++) {
        const y = y0 + (j + (b + 0.5) / SUB - 0.5) * g.dy;
        for (let a = 0; a < SUB; a++) if (inside(x0 + (i + (a + 0.5) / SUB - 0.5) * g.dx, y)) n++;
      }
      out[j * g.nx + i] = n / (SUB * SUB);
    }
  }
  return out;
}

/**
 * Coverage of each pixel by a polygon (even-odd rule), from SUB x SUB sub-samples, row by row:
 * the crossings of each sub-sample row with the edges, sorted, bound the inside spans (the
 * scanline form of inPolygon, linear in the number of edges per row instead of per sample).
 */
function polygonCoverage(g: ImageGrid, points: readonly (readonly [number, number])[]): Float32Array {
  const out = new Float32Array(g.nx * g.ny);
  const { x0, y0 } = gridOrigin(g);
  const crossings: number[] = [];
  const w = 1 / (SUB * SUB);
  for (let j = 0; j < g.ny; j++) {
    for (let b = 0; b < SUB; b++) {
      const y = y0 + (j + (b + 0.5) / SUB - 0.5) * g.dy;
      crossings.length = 0;
      for (let k = 0, m = points.length - 1; k < points.length; m = k++) {
        const [xk, yk] = points[k], [xm, ym] = points[m];
        if (yk > y !== ym > y) crossings.push(((xm - xk) * (y - yk)) / (ym - yk) + xk);
      }
      crossings.sort((p, q) => p - q);
      for (let c = 0; c + 1 < crossings.length; c += 2) {
        // Sub-sample columns a (over the whole row) whose x lies in [crossings[c], crossings[c + 1]).
        const first = Math.max(0, Math.ceil(((crossings[c] - x0) / g.dx + 0.5) * SUB - 0.5));
        const last = Math.min(g.nx * SUB - 1, Math.ceil(((crossings[c + 1] - x0) / g.dx + 0.5) * SUB - 0.5) - 1);
        for (let a = first; a <= last; a++) out[j * g.nx + Math.floor(a / SUB)] += w;
      }
    }
  }
  return out;
}

/** Even-odd rule point-in-polygon test. */
function inPolygon(points: readonly (readonly [number, number])[], x: number, y: number): boolean {
  let inside = false;
  for (let k = 0, m = points.length - 1; k < points.length; m = k++) {
    const [xk, yk] = points[k], [xm, ym] = points[m];
    if (yk > y !== ym > y && x < ((xm - xk) * (y - yk)) / (ym - yk) + xk) inside = !inside;
  }
  return inside;
}

/** The mask named `input` sampled on `g` (bilinear or trilinear), values as stored. */
function maskOnGrid(input: string, g: ImageGrid | VolumeGrid, masks: MaskInputs | undefined, what: string): Float32Array {
  const m = masks?.[input];
  if (!m) throw new InputError(`${what}: the mask "${input}" was not given`);
  const mv = (m as Volume).grid && (m.grid as VolumeGrid).nz !== undefined ? (m as Volume) : undefined;
  if (isVolumeGrid(g)) {
    if (mv) return sameVolumeGrid(mv.grid, g) ? mv.data : resampleTrilinear(mv.data, mv.grid, g);
    const plane = sameGrid(m.grid, g) ? m.data : resampleBilinear(m.data, m.grid, g);
    return repeatPlanes(plane, g.nz);
  }
  if (mv) throw new InputError(`${what}: the mask "${input}" is a volume, the reconstruction is a 2D image`);
  return sameGrid(m.grid, g) ? m.data : resampleBilinear(m.data, m.grid, g);
}

function repeatPlanes(plane: Float32Array, nz: number, keep?: (k: number) => boolean): Float32Array {
  const out = new Float32Array(plane.length * nz);
  for (let k = 0; k < nz; k++) if (!keep || keep(k)) out.set(plane, k * plane.length);
  return out;
}

/** Coverage (0..1) of every pixel or voxel of `g` by a known region. */
export function regionCoverage(region: KnownRegion, g: ImageGrid | VolumeGrid, masks?: MaskInputs, what = 'known region'): Float32Array {
  if (region.shape === 'mask') return maskOnGrid(region.input, g, masks, what).map((v) => (v > 0.5 ? 1 : 0));
  const { x, y, r } = region;
  const plane = coverage(g, (px, py) => (px - x) ** 2 + (py - y) ** 2 <= r * r, [x - r, x + r, y - r, y + r]);
  if (!isVolumeGrid(g)) return plane;
  const z0 = volumeOrigin(g).z0;
  const slab = region.z;
  return repeatPlanes(plane, g.nz, slab ? (k) => z0 + k * g.dz >= slab[0] && z0 + k * g.dz <= slab[1] : undefined);
}

/** Inside test of an outline at a point, mm (ellipse and polygon). */
export function outlineContains(o: Exclude<Outline, { shape: 'mask' }>, x: number, y: number): boolean {
  if (o.shape === 'polygon') return inPolygon(o.points, x, y);
  const t = ((o.angleDeg ?? 0) * Math.PI) / 180;
  const dx = x - o.cx, dy = y - o.cy;
  const u = dx * Math.cos(t) + dy * Math.sin(t), v = -dx * Math.sin(t) + dy * Math.cos(t);
  return (u / o.a) ** 2 + (v / o.b) ** 2 <= 1;
}

/** 1 inside the outline, 0 outside (a pixel is inside when at least half of it is). */
export function outlineMask(outline: Outline, g: ImageGrid | VolumeGrid, masks?: MaskInputs): Uint8Array {
  if (outline.shape === 'mask') return Uint8Array.from(maskOnGrid(outline.input, g, masks, 'outline'), (v) => (v > 0.5 ? 1 : 0));
  const plane = outline.shape === 'polygon' ? polygonCoverage(g, outline.points) : coverage(g, (x, y) => outlineContains(outline, x, y));
  const mask = Uint8Array.from(plane, (v) => (v >= 0.5 ? 1 : 0));
  if (!isVolumeGrid(g)) return mask;
  const out = new Uint8Array(mask.length * g.nz);
  for (let k = 0; k < g.nz; k++) out.set(mask, k * mask.length);
  return out;
}
