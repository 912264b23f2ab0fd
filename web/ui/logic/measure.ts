// Measurements on images: a line profile with bilinear sampling, and mean / SD in a circular
// region. Points are in mm on the image grid (DEVELOPERS.md, "Geometry": pixel (i, j) centre at
// x = (i - (nx-1)/2) dx + cx, y = (j - (ny-1)/2) dy + cy). Pixels a result does not determine
// (its undetermined mask, DBP) hold a fill, not a value: they never enter a figure.
import { gridOrigin, type ImageGrid } from '../../core/image';

export interface Point {
  x: number;
  y: number;
}

/** Bilinear value at (x, y) mm; NaN outside the pixel centres' hull and where a pixel it takes is marked in `mask`. */
export function valueAt(values: Float32Array, g: ImageGrid, p: Point, mask?: Uint8Array): number {
  const { x0, y0 } = gridOrigin(g);
  const fi = (p.x - x0) / g.dx, fj = (p.y - y0) / g.dy;
  if (!(fi >= 0 && fj >= 0 && fi <= g.nx - 1 && fj <= g.ny - 1)) return NaN;
  // The cell whose lower-left pixel is (i, j); the last row / column uses the cell before it.
  const i = Math.min(Math.floor(fi), Math.max(0, g.nx - 2)), j = Math.min(Math.floor(fj), Math.max(0, g.ny - 2));
  const tx = fi - i, ty = fj - j;
  const at = (ii: number, jj: number) => {
    const q = Math.min(jj, g.ny - 1) * g.nx + Math.min(ii, g.nx - 1);
    return mask?.[q] === 1 ? NaN : values[q];
  };
  return (1 - ty) * ((1 - tx) * at(i, j) + tx * at(i + 1, j)) + ty * ((1 - tx) * at(i, j + 1) + tx * at(i + 1, j + 1));
}

/** Nearest-pixel value at (x, y) mm (what a cursor read-out shows); NaN outside the image. */
export function pixelAt(values: Float32Array, g: ImageGrid, p: Point): number {
  const { x0, y0 } = gridOrigin(g);
  const i = Math.round((p.x - x0) / g.dx), j = Math.round((p.y - y0) / g.dy);
  if (i < 0 || j < 0 || i >= g.nx || j >= g.ny) return NaN;
  return values[j * g.nx + i];
}

export interface Profile {
  /** Distance from the start point, mm. */
  distance: number[];
  values: number[];
}

/**
 * Values along the segment p0 -> p1, sampled every `step` mm (default: half the smaller
 * pixel size, so no pixel is skipped) and at both ends; NaN (a gap) next to pixels marked in `mask`.
 */
export function sampleProfile(values: Float32Array, g: ImageGrid, p0: Point, p1: Point, step = Math.min(g.dx, g.dy) / 2, mask?: Uint8Array): Profile {
  const length = Math.hypot(p1.x - p0.x, p1.y - p0.y);
  const n = Math.max(1, Math.ceil(length / step));
  const out: Profile = { distance: [], values: [] };
  for (let k = 0; k <= n; k++) {
    const t = k / n;
    out.distance.push(t * length);
    out.values.push(valueAt(values, g, { x: p0.x + t * (p1.x - p0.x), y: p0.y + t * (p1.y - p0.y) }, mask));
  }
  return out;
}

export interface RegionStats {
  /** Pixels whose centres lie in the circle (and that are determined: the figures are theirs). */
  pixels: number;
  /** Pixels in the circle the result does not determine (left out of the figures). */
  undetermined: number;
  mean: number;
  /** Sample standard deviation (n - 1). */
  sd: number;
}

/** Mean and SD of the pixels whose centres lie within `radius` mm of `centre`, leaving out those marked in `mask`. */
export function regionStats(values: Float32Array, g: ImageGrid, centre: Point, radius: number, mask?: Uint8Array): RegionStats {
  const { x0, y0 } = gridOrigin(g);
  const r2 = radius * radius;
  const i0 = Math.max(0, Math.floor((centre.x - radius - x0) / g.dx));
  const i1 = Math.min(g.nx - 1, Math.ceil((centre.x + radius - x0) / g.dx));
  const j0 = Math.max(0, Math.floor((centre.y - radius - y0) / g.dy));
  const j1 = Math.min(g.ny - 1, Math.ceil((centre.y + radius - y0) / g.dy));
  // Welford's running mean and variance (Knuth, TAOCP vol. 2, 4.2.2): stable for large n.
  let n = 0, mean = 0, m2 = 0, undetermined = 0;
  for (let j = j0; j <= j1; j++) {
    const dy = y0 + j * g.dy - centre.y;
    for (let i = i0; i <= i1; i++) {
      const dx = x0 + i * g.dx - centre.x;
      if (dx * dx + dy * dy > r2) continue;
      if (mask?.[j * g.nx + i] === 1) { undetermined++; continue; }
      const v = values[j * g.nx + i];
      n++;
      const d = v - mean;
      mean += d / n;
      m2 += d * (v - mean);
    }
  }
  return { pixels: n, undetermined, mean: n ? mean : NaN, sd: n > 1 ? Math.sqrt(m2 / (n - 1)) : NaN };
}
