// Volume grids and volumes (DEVELOPERS.md, "Geometry": voxel (i, j, k) centre x = (i - (nx-1)/2) dx + cx,
// likewise y and z; i fastest, then j, then k).
import { InputError } from './errors';
import type { Image2D, ImageGrid, ImageQuantity } from './image';

/** A 3D reconstruction grid, mm. */
export interface VolumeGrid extends ImageGrid {
  nz: number;
  /** Slice spacing along z, mm. */
  dz: number;
  /** z of the grid centre, mm. */
  cz: number;
}

/** A volume: values in 1/mm (mu) or HU, x fastest, then y, then z. */
export interface Volume {
  grid: VolumeGrid;
  data: Float32Array;
  quantity: ImageQuantity;
  /** Attenuation of water, 1/mm, when known (needed for HU). */
  muWater?: number;
  /** Radius of the scan's measured field of view about the rotation axis, mm, when known. */
  fovRadius?: number;
  /** What made it, in words (the method and its knowledge), when known. */
  description?: string;
  /** Half height along z of the region every view measures, on the axis, mm, when known. */
  fovHalfHeight?: number;
}

/** Largest voxel count a volume may have (2^28 floats = 1 GiB). */
export const MAX_VOXELS = 2 ** 28;

/** Centre of voxel (0, 0, 0), mm. */
export function volumeOrigin(g: VolumeGrid): { x0: number; y0: number; z0: number } {
  return {
    x0: g.cx - ((g.nx - 1) / 2) * g.dx,
    y0: g.cy - ((g.ny - 1) / 2) * g.dy,
    z0: g.cz - ((g.nz - 1) / 2) * g.dz,
  };
}

/** Voxels in a grid. */
export function voxelCount(g: VolumeGrid): number {
  return g.nx * g.ny * g.nz;
}

/**
 * Validates a grid: whole sizes from 1 to 8192 (nz to 4096), positive finite spacings, finite
 * centre, at most MAX_VOXELS voxels. Messages name the field, the value and what was expected.
 */
export function checkVolumeGrid(g: VolumeGrid): VolumeGrid {
  for (const [k, max] of [['nx', 8192], ['ny', 8192], ['nz', 4096]] as const) {
    if (!Number.isInteger(g[k]) || g[k] < 1 || g[k] > max) throw new InputError(`volume grid ${k}: got ${g[k]}, expected a whole number from 1 to ${max}`);
  }
  for (const k of ['dx', 'dy', 'dz'] as const) {
    if (!(g[k] > 0) || !Number.isFinite(g[k])) throw new InputError(`volume grid ${k}: got ${g[k]}, expected a positive voxel size in mm`);
  }
  for (const k of ['cx', 'cy', 'cz'] as const) {
    if (!Number.isFinite(g[k])) throw new InputError(`volume grid ${k}: got ${g[k]}, expected a finite centre in mm`);
  }
  const n = voxelCount(g);
  if (n > MAX_VOXELS) throw new InputError(`volume grid: ${g.nx} x ${g.ny} x ${g.nz} = ${n} voxels, more than the limit of ${MAX_VOXELS}`);
  return g;
}

/** A grid of n x n voxels of `pixel` mm and nz slices of `spacing` mm, centred on the isocentre. */
export function cubicGrid(n: number, pixel: number, nz: number, spacing = pixel): VolumeGrid {
  return checkVolumeGrid({ nx: n, ny: n, nz, dx: pixel, dy: pixel, dz: spacing, cx: 0, cy: 0, cz: 0 });
}

/** The xy grid of one axial slice. */
export function sliceGrid(g: VolumeGrid): ImageGrid {
  return { nx: g.nx, ny: g.ny, dx: g.dx, dy: g.dy, cx: g.cx, cy: g.cy };
}

/** Axial slice k of a volume as an image (a copy). */
export function axialSlice(v: Volume, k: number): Image2D {
  const g = v.grid;
  if (!Number.isInteger(k) || k < 0 || k >= g.nz) throw new InputError(`slice: got ${k}, expected a whole number from 0 to ${g.nz - 1}`);
  const n = g.nx * g.ny;
  return {
    grid: sliceGrid(g),
    data: v.data.slice(k * n, (k + 1) * n),
    quantity: v.quantity,
    muWater: v.muWater,
    fovRadius: v.fovRadius,
    description: v.description,
  };
}

/** Index of the slice whose centre is nearest to z (mm), clamped to the grid. */
export function sliceAt(g: VolumeGrid, z: number): number {
  const k = Math.round((z - volumeOrigin(g).z0) / g.dz);
  return Math.min(g.nz - 1, Math.max(0, k));
}

/**
 * Runs `layout` (engine allocations for a volume job); a memory limit it hits (RangeError from
 * the engine memory) becomes an InputError that names the grid.
 */
export function withVolumeMemory<T>(g: VolumeGrid, layout: () => T): T {
  try {
    return layout();
  } catch (err) {
    if (err instanceof RangeError) throw new InputError(`volume grid ${g.nx} x ${g.ny} x ${g.nz}: ${err.message}; choose fewer voxels or slices`);
    throw err;
  }
}
