// The extended detector of an iterative reconstruction: the measured channels plus enough
// unmeasured channels on each side that every ray through the reconstruction support hits a
// channel. Unmeasured channels carry no data (SART, TV) or the forward projection of a prior.
import { InputError } from '../errors';
import { extendDetector } from '../geometry/presets';
import type { Geometry } from '../geometry/types';
import { firstChannelU } from '../geometry/view-vectors';
import { gridOrigin, type ImageGrid } from '../image';

/** Largest extended detector we lay out (channels). */
export const MAX_EXTENDED_CHANNELS = 20000;

export interface Extension {
  /** Channels added before channel 0 and after the last measured channel. */
  left: number;
  right: number;
  /** The extended geometry; measured channel k is its channel left + k. */
  geometry: Geometry;
}

/**
 * Detector coordinate (mm) whose ray passes at `radius` mm from the isocentre: parallel u = r;
 * fan with a flat detector u = D tan(asin(r / R)); curved u = D asin(r / R) (DEVELOPERS.md, "Geometry"
 * conventions: the ray at fan angle g passes at R |sin g| from the isocentre).
 */
export function detectorReach(g: Geometry, radius: number): number {
  if (g.kind === 'parallel') return radius;
  const R = g.sourceIsocenter!, D = g.sourceDetector!;
  if (radius >= R) throw new InputError(`reconstruction support: reaches ${radius.toFixed(1)} mm from the isocentre, expected less than the source distance ${R} mm`);
  const gamma = Math.asin(radius / R);
  return g.detector.shape === 'curved' ? D * gamma : D * Math.tan(gamma);
}

/**
 * The smallest extension (plus one spare channel per side) whose channels reach `radius` mm
 * from the isocentre on both sides. Sides the measured detector already covers get none.
 */
export function extendToCover(g: Geometry, radius: number): Extension {
  const pitch = g.detector.pitch[0];
  const reach = detectorReach(g, radius);
  const first = firstChannelU(g);
  const last = first + (g.detector.channels - 1) * pitch;
  const side = (gap: number) => (gap > 0 ? Math.ceil(gap / pitch) + 1 : 0);
  const left = side(first + reach);
  const right = side(reach - last);
  const total = g.detector.channels + left + right;
  if (total > MAX_EXTENDED_CHANNELS) {
    throw new InputError(`reconstruction grid: covering it needs an extended detector of ${total} channels, more than ${MAX_EXTENDED_CHANNELS}`, {
      remedy: { cli: 'use a smaller grid (--size/--pixel) or a coarser detector', page: 'choose a smaller image grid, or a coarser detector' },
    });
  }
  return { left, right, geometry: extendDetector(g, left, right) };
}

/** Distance from the isocentre to the farthest point of any pixel in the mask, mm. */
export function maskRadius(grid: ImageGrid, mask: Uint8Array): number {
  const { x0, y0 } = gridOrigin(grid);
  const halfDiagonal = Math.hypot(grid.dx, grid.dy) / 2;
  let r = 0;
  for (let j = 0; j < grid.ny; j++) {
    for (let i = 0; i < grid.nx; i++) {
      if (mask[j * grid.nx + i]) r = Math.max(r, Math.hypot(x0 + i * grid.dx, y0 + j * grid.dy));
    }
  }
  return r + halfDiagonal;
}
