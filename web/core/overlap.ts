// How much of an image a reference covers: the area (volume) where the two grids' extents meet,
// over the image's own, with each grid extending half a pixel beyond its outer pixel centres.
// Comparisons report it and refuse grids that do not meet: figures over empty space say nothing.
import { InputError } from './errors';
import type { ImageGrid } from './image';
import type { VolumeGrid } from './volume';

/** Below this fraction of the image covered, a comparison says so. */
export const OVERLAP_WARNING = 0.9;

/** Length of [a0, a1] inside [b0, b1]. */
function common(a0: number, a1: number, b0: number, b1: number): number {
  return Math.max(0, Math.min(a1, b1) - Math.max(a0, b0));
}

/** Extent of a grid along one axis: [centre - n d / 2, centre + n d / 2], mm. */
function extent(n: number, d: number, c: number): [number, number] {
  return [c - (n * d) / 2, c + (n * d) / 2];
}

/** Fraction of the image grid's area (its x and y extent; with z, its volume) that the reference covers, 0 to 1. */
export function overlapFraction(image: ImageGrid | VolumeGrid, reference: ImageGrid | VolumeGrid): number {
  const axes: Array<[number, number, number, number, number, number]> = [
    [image.nx, image.dx, image.cx, reference.nx, reference.dx, reference.cx],
    [image.ny, image.dy, image.cy, reference.ny, reference.dy, reference.cy],
  ];
  if ('nz' in image && 'nz' in reference) axes.push([image.nz, image.dz, image.cz, reference.nz, reference.dz, reference.cz]);
  let f = 1;
  for (const [n, d, c, m, e, r] of axes) {
    const [a0, a1] = extent(n, d, c);
    const [b0, b1] = extent(m, e, r);
    f *= common(a0, a1, b0, b1) / (a1 - a0);
  }
  return f;
}

/**
 * The overlap of a comparison and what to tell the user: throws InputError when the grids do not
 * meet, returns a note when the reference covers less than OVERLAP_WARNING of the image.
 */
export function checkOverlap(image: ImageGrid | VolumeGrid, reference: ImageGrid | VolumeGrid, what = 'image'): { overlap: number; note?: string } {
  const overlap = overlapFraction(image, reference);
  const span = (g: ImageGrid | VolumeGrid) => {
    const parts = [extent(g.nx, g.dx, g.cx), extent(g.ny, g.dy, g.cy), ...('nz' in g ? [extent(g.nz, g.dz, g.cz)] : [])];
    return parts.map(([a, b], k) => `${'xyz'[k]} ${a.toFixed(1)} to ${b.toFixed(1)}`).join(', ');
  };
  if (!(overlap > 0)) throw new InputError(`reference: it does not overlap the ${what} (${what} ${span(image)} mm; reference ${span(reference)} mm), so there is nothing to compare`);
  if (overlap >= OVERLAP_WARNING) return { overlap };
  const pct = (100 * overlap).toFixed(1);
  const of = 'nz' in image ? `the ${what}` : `the ${what}'s area`;
  return { overlap, note: `the reference covers only ${pct}% of ${of}; beyond it the reference counts as zero (air), so the figures over the whole ${what} mostly measure that gap` };
}
