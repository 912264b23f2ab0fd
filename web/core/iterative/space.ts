// What the iterative methods reconstruct: an image (2D scans, Projector2d) or a volume
// (cone-beam scans, Projector3d). Both projectors take view ranges, so ordered subsets work the
// same; a view holds `rows` detector rows of channels (1 for 2D scans). Elementwise work splits
// the image or volume into lines of x (image rows; rows of every slice of a volume).
import type { Buf, Workspace } from '../engine/workspace';
import type { Geometry } from '../geometry/types';
import { circleMask } from '../metrics';
import type { ImageGrid } from '../image';
import { Projector2d } from '../recon/projector';
import { Projector3d } from '../recon/projector3d';
import { sliceGrid, type VolumeGrid } from '../volume';
import { BandOps } from './image-ops';

/** An image grid (2D) or a volume grid (3D). */
export type ReconGrid = ImageGrid | VolumeGrid;

/** True for volume grids. */
export function isVolumeGrid(g: ReconGrid): g is VolumeGrid {
  return (g as VolumeGrid).nz !== undefined;
}

/** Slices of a grid (1 for an image). */
export function sliceCount(g: ReconGrid): number {
  return isVolumeGrid(g) ? g.nz : 1;
}

/** Pixels or voxels of a grid. */
export function gridSize(g: ReconGrid): number {
  return g.nx * g.ny * sliceCount(g);
}

/** The xy grid of one slice (the grid itself for an image). */
export function planeGrid(g: ReconGrid): ImageGrid {
  return isVolumeGrid(g) ? sliceGrid(g) : g;
}

/** Band operations over the lines of x of a grid (ny lines per slice). */
export function gridBands(ws: Workspace, g: ReconGrid): BandOps {
  return new BandOps(ws, g.nx, g.ny * sliceCount(g));
}

/** A disk of `radius` mm about the rotation axis in every slice (1 inside, 0 outside). */
export function discMask(g: ReconGrid, radius: number): Uint8Array {
  const disc = circleMask(planeGrid(g), radius);
  const n = sliceCount(g);
  if (n === 1) return disc;
  const out = new Uint8Array(disc.length * n);
  for (let k = 0; k < n; k++) out.set(disc, k * disc.length);
  return out;
}

/** The projector both methods need: forward and adjoint over a range of views. */
export interface ViewProjector {
  readonly nViews: number;
  /** Channels per detector row. */
  readonly nCh: number;
  /** `signal`: a projector may check it between parts of its work (the 3D one does). */
  forward(x: Buf, out: Buf, view0?: number, view1?: number, signal?: AbortSignal): Promise<void>;
  adjoint(p: Buf, out: Buf, view0?: number, view1?: number, signal?: AbortSignal): Promise<void>;
  /**
   * A faster backprojector close to the adjoint (volumes: voxel-driven, Projector3d); OS-SART
   * uses it for its update and pixel weights when present.
   */
  backprojectVoxels?(p: Buf, out: Buf, view0?: number, view1?: number, signal?: AbortSignal): Promise<void>;
}

/** The projector of a grid and geometry, and the detector rows of each view. */
export async function createProjector(ws: Workspace, grid: ReconGrid, geometry: Geometry): Promise<{ projector: ViewProjector; rows: number }> {
  if (isVolumeGrid(grid)) {
    const p = await Projector3d.create(ws, grid, geometry);
    return { projector: p, rows: p.nRows };
  }
  return { projector: await Projector2d.create(ws, grid, geometry), rows: 1 };
}
