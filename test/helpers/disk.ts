// A disk added to an image, and which rays of a geometry cross it (from the geometry's own ray
// model, rayAt in web/core/geometry/view-vectors.ts).
import type { Geometry } from '../../web/core/geometry/types';
import { firstChannelU, kernelKind, rayAt, viewVectors, VIEW_STRIDE } from '../../web/core/geometry/view-vectors';
import { gridOrigin, type ImageGrid } from '../../web/core/image';

export interface Disk {
  cx: number;
  cy: number;
  r: number;
  value: number;
}

/** A false structure: +0.01/mm (about +500 HU) in the thorax's chest wall, outside a 345-channel scan's FOV. */
export const FALSE_DISK: Disk = { cx: 120, cy: 30, r: 12, value: 0.01 };

/** Image of the disk on `grid` (pixel centres inside get `value`). */
export function diskImage(d: Disk, grid: ImageGrid): Float32Array {
  const out = new Float32Array(grid.nx * grid.ny);
  const { x0, y0 } = gridOrigin(grid);
  for (let j = 0; j < grid.ny; j++) {
    for (let i = 0; i < grid.nx; i++) {
      if ((x0 + i * grid.dx - d.cx) ** 2 + (y0 + j * grid.dy - d.cy) ** 2 < d.r * d.r) out[j * grid.nx + i] = d.value;
    }
  }
  return out;
}

/** Mean of (withDisk - clean) over the disk's pixels on `grid`, and how many pixels that is: the contrast a result kept. */
export function contrastKept(withDisk: Float32Array, clean: Float32Array, d: Disk, grid: ImageGrid): { kept: number; pixels: number } {
  const disk = diskImage(d, grid);
  let sum = 0, n = 0;
  for (let i = 0; i < disk.length; i++) {
    if (!disk[i]) continue;
    sum += withDisk[i] - clean[i];
    n++;
  }
  return { kept: sum / n, pixels: n };
}

/** Distance (mm) from the disk centre to the central ray of every view and channel ([view][channel]). */
export function rayDistances(g: Geometry, d: Disk): Float32Array {
  const views = viewVectors(g);
  const kind = kernelKind(g);
  const nViews = views.length / VIEW_STRIDE, nCh = g.detector.channels;
  const u0 = firstChannelU(g), pitch = g.detector.pitch[0];
  const out = new Float32Array(nViews * nCh);
  for (let v = 0; v < nViews; v++) {
    for (let k = 0; k < nCh; k++) {
      const ray = rayAt(views, v, kind, u0 + k * pitch);
      // |(c - p) x dir| for a unit direction.
      out[v * nCh + k] = Math.abs((d.cx - ray.px) * ray.dy - (d.cy - ray.py) * ray.dx);
    }
  }
  return out;
}
