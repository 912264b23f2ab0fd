// The three orthogonal planes of a volume as 2D images for the image viewer, and the mapping
// between a plane's point and the 3D cursor (mm). Axial: (x, y), anterior up, the patient's
// right (-x) on the left as in the 2D views. Coronal: (x, z), superior up, the patient's right
// on the left. Sagittal: (y, z), superior up, anterior on the right. The FOV is the cylinder the volume records (radius fovRadius, half
// height fovHalfHeight about the isocentre, compare-volume.ts): a circle in the axial plane
// while the slice lies within its height, a rectangle in the others where they cut it.
import type { ImageGrid } from '../../core/image';
import { volumeOrigin, type Volume, type VolumeGrid } from '../../core/volume';
import { toDisplay, type DisplayImage } from './display';
import type { Point } from './measure';

export type Plane = 'axial' | 'coronal' | 'sagittal';
export const PLANES: readonly Plane[] = ['axial', 'coronal', 'sagittal'];

/** A point in the volume, mm. */
export interface Point3 {
  x: number;
  y: number;
  z: number;
}

/** Names of a plane's horizontal and vertical axes (for read-outs). */
export const PLANE_AXES: Record<Plane, [string, string]> = { axial: ['x', 'y'], coronal: ['x', 'z'], sagittal: ['y', 'z'] };

/** The plane's 2D point for a 3D point. */
export function toPlane(plane: Plane, p: Point3): Point {
  if (plane === 'axial') return { x: p.x, y: p.y };
  if (plane === 'coronal') return { x: p.x, y: p.z };
  return { x: p.y, y: p.z };
}

/** The 3D point for a plane's 2D point, keeping the coordinate across the plane from `at`. */
export function fromPlane(plane: Plane, q: Point, at: Point3): Point3 {
  if (plane === 'axial') return { x: q.x, y: q.y, z: at.z };
  if (plane === 'coronal') return { x: q.x, y: at.y, z: q.y };
  return { x: at.x, y: q.x, z: q.y };
}

/** Index of the voxel nearest coordinate c along an axis of n voxels from origin o, spacing d (clamped). */
function nearest(c: number, o: number, d: number, n: number): number {
  return Math.min(n - 1, Math.max(0, Math.round((c - o) / d)));
}

/** The slice index each plane shows for a cursor: axial k, coronal j, sagittal i. */
export function planeIndex(g: VolumeGrid, plane: Plane, p: Point3): number {
  const o = volumeOrigin(g);
  if (plane === 'axial') return nearest(p.z, o.z0, g.dz, g.nz);
  if (plane === 'coronal') return nearest(p.y, o.y0, g.dy, g.ny);
  return nearest(p.x, o.x0, g.dx, g.nx);
}

/** Number of slices a plane can show. */
export function planeCount(g: VolumeGrid, plane: Plane): number {
  return plane === 'axial' ? g.nz : plane === 'coronal' ? g.ny : g.nx;
}

/** The cursor moved to slice `index` of a plane (the other two coordinates kept). */
export function atIndex(g: VolumeGrid, plane: Plane, index: number, p: Point3): Point3 {
  const o = volumeOrigin(g);
  if (plane === 'axial') return { ...p, z: o.z0 + index * g.dz };
  if (plane === 'coronal') return { ...p, y: o.y0 + index * g.dy };
  return { ...p, x: o.x0 + index * g.dx };
}

/** The 2D grid of a plane (its horizontal and vertical axes as x and y). */
export function planeGrid(g: VolumeGrid, plane: Plane): ImageGrid {
  if (plane === 'axial') return { nx: g.nx, ny: g.ny, dx: g.dx, dy: g.dy, cx: g.cx, cy: g.cy };
  if (plane === 'coronal') return { nx: g.nx, ny: g.nz, dx: g.dx, dy: g.dz, cx: g.cx, cy: g.cz };
  return { nx: g.ny, ny: g.nz, dx: g.dy, dy: g.dz, cx: g.cy, cy: g.cz };
}

/** The voxels of a plane through the cursor (mu, the plane grid's layout: first axis fastest). */
export function planeValues(v: Volume, plane: Plane, p: Point3): Float32Array {
  const g = v.grid, nxy = g.nx * g.ny;
  const index = planeIndex(g, plane, p);
  if (plane === 'axial') return v.data.subarray(index * nxy, (index + 1) * nxy);
  if (plane === 'coronal') {
    const out = new Float32Array(g.nx * g.nz);
    for (let k = 0; k < g.nz; k++) out.set(v.data.subarray(k * nxy + index * g.nx, k * nxy + (index + 1) * g.nx), k * g.nx);
    return out;
  }
  const out = new Float32Array(g.ny * g.nz);
  for (let k = 0; k < g.nz; k++) {
    for (let j = 0; j < g.ny; j++) out[k * g.ny + j] = v.data[k * nxy + j * g.nx + index];
  }
  return out;
}

/** The FOV cylinder's outline in a coronal or sagittal plane through p (undefined where the plane misses it). */
export function fovOutline(plane: Plane, p: Point3, radius?: number, halfHeight?: number): Point[] | undefined {
  if (plane === 'axial' || radius === undefined || halfHeight === undefined) return undefined;
  const across = plane === 'coronal' ? p.y : p.x;
  if (Math.abs(across) >= radius) return undefined;
  const w = Math.sqrt(radius * radius - across * across), h = halfHeight;
  return [{ x: -w, y: -h }, { x: w, y: -h }, { x: w, y: h }, { x: -w, y: h }];
}

/** A plane through the cursor, ready for the image viewer (display units, FOV marks, axis names). */
export function planeImage(v: Volume, plane: Plane, p: Point3, label: string): DisplayImage {
  return planeImageOf(v, plane, planeValues(v, plane, p), p, label);
}

/** planeImage for a plane's voxels read on their own (`info`: the volume's description). */
export function planeImageOf(v: Omit<Volume, 'data'>, plane: Plane, values: Float32Array, p: Point3, label: string): DisplayImage {
  const grid = planeGrid(v.grid, plane);
  const inHeight = v.fovHalfHeight === undefined || Math.abs(p.z) <= v.fovHalfHeight;
  const d = toDisplay({ grid, data: values, quantity: v.quantity, muWater: v.muWater }, label);
  return {
    ...d,
    fovRadius: plane === 'axial' && inHeight ? v.fovRadius : undefined,
    outline: fovOutline(plane, p, v.fovRadius, v.fovHalfHeight),
    axes: PLANE_AXES[plane],
  };
}
