// The value a reconstruction gives a known region: the coverage-weighted mean of FBP onto the
// pixels of the reconstruction grid the region covers. Only the region's bounding box of the
// grid is backprojected, so a fit can try many extensions for the cost of their filtering.
import type { Workspace } from '../engine/workspace';
import { checkGrid, gridOrigin, type ImageGrid } from '../image';
import type { PlacedRegion } from '../knowledge';
import type { FilterWindow } from '../recon/filter-design';
import { fbp2d } from '../recon/fbp';
import type { Scan } from '../scan';
import type { DetectorExtension } from '../truncation/extension-plan';

/** A region's pixels as a small grid aligned with the reconstruction grid, and its coverage there. */
export interface RegionWindow {
  grid: ImageGrid;
  coverage: Float32Array;
  total: number;
}

/** The bounding box of a region's coverage on the plane grid `g` (pixel centres on g's lattice). */
export function regionWindow(region: PlacedRegion, g: ImageGrid): RegionWindow {
  let i0 = g.nx, i1 = -1, j0 = g.ny, j1 = -1;
  const plane = g.nx * g.ny;
  for (let q = 0; q < plane; q++) {
    if (!(region.coverage[q] > 0)) continue;
    const i = q % g.nx, j = (q - i) / g.nx;
    i0 = Math.min(i0, i); i1 = Math.max(i1, i); j0 = Math.min(j0, j); j1 = Math.max(j1, j);
  }
  const nx = i1 - i0 + 1, ny = j1 - j0 + 1;
  const { x0, y0 } = gridOrigin(g);
  const grid = checkGrid({ nx, ny, dx: g.dx, dy: g.dy, cx: x0 + ((i0 + i1) / 2) * g.dx, cy: y0 + ((j0 + j1) / 2) * g.dy });
  const coverage = new Float32Array(nx * ny);
  let total = 0;
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const c = region.coverage[(j0 + j) * g.nx + i0 + i];
      coverage[j * nx + i] = c;
      total += c;
    }
  }
  return { grid, coverage, total };
}

export interface FbpSettings {
  filter: FilterWindow;
  /** Band limit of the filter window, line pairs per cm at the isocentre; absent: the full band. */
  bandLimit?: number;
}

/** Mean of FBP with extension `ext` over each region window, mu in 1/mm. */
export async function regionValues(ws: Workspace, scan: Scan, ext: DetectorExtension, windows: RegionWindow[], f: FbpSettings): Promise<number[]> {
  const out: number[] = [];
  for (const w of windows) {
    const r = await fbp2d(ws, scan, { grid: w.grid, filter: f.filter, bandLimit: f.bandLimit, extension: ext });
    let s = 0;
    for (let q = 0; q < w.coverage.length; q++) s += w.coverage[q] * r.image.data[q];
    out.push(s / w.total);
  }
  return out;
}
