// What the outline says about the object's moments: the part of the object outside the strip a
// parallel view measures (|s| > S) lies inside the outline; filled with water-equivalent
// material it carries, per view, mass mu_w A(theta) and first moment mu_w B(theta), with
// A = area of the outline beyond the strip and B = int s dA over it. Added to the measured
// moments they give the object's mass and centroid (moments.ts; the idea of completing
// projections from the patient's size and shape, Kolditz, Kyriakou & Kalender 2011,
// REFERENCES.md [kolditz2011]).
import { squareGrid, gridOrigin, type ImageGrid } from '../image';
import { outlineMask, type MaskInputs, type Outline } from '../knowledge';
import { objectMomentsFrom, type MeasuredMoments, type ObjectMoments } from './moments';
import type { ParallelDomain } from './parallel-domain';

/** Sampling of drawn outlines (ellipse, polygon) for the moments, mm. */
const OUTLINE_PIXEL = 1;

/** The outline as a mask on a grid of its own (drawn shapes) or its image's grid (mask files). */
export function outlineRaster(outline: Outline, masks?: MaskInputs): { grid: ImageGrid; mask: Uint8Array } {
  if (outline.shape === 'mask') {
    const img = masks?.[outline.input];
    if (img && (img.grid as { nz?: number }).nz === undefined) return { grid: img.grid, mask: outlineMask(outline, img.grid, masks) };
  }
  let r = 0;
  if (outline.shape === 'ellipse') r = Math.hypot(outline.cx, outline.cy) + Math.max(outline.a, outline.b);
  else if (outline.shape === 'polygon') r = Math.max(...outline.points.map(([x, y]) => Math.hypot(x, y)));
  const n = 2 * Math.ceil((r + 2) / OUTLINE_PIXEL);
  const grid = squareGrid(Math.max(8, n), OUTLINE_PIXEL);
  return { grid, mask: outlineMask(outline, grid, masks) };
}

/** Area of the outline beyond each view's measured strip and its first moment in s. */
export function outlineBeyondStrip(pd: ParallelDomain, raster: { grid: ImageGrid; mask: Uint8Array }): { area: Float64Array; first: Float64Array } {
  const { grid, mask } = raster;
  const { x0, y0 } = gridOrigin(grid);
  const S = pd.half * pd.ds;
  const cos = pd.angles.map(Math.cos), sin = pd.angles.map(Math.sin);
  const area = new Float64Array(pd.nViews), first = new Float64Array(pd.nViews);
  const cell = grid.dx * grid.dy;
  for (let q = 0; q < mask.length; q++) {
    if (!mask[q]) continue;
    const x = x0 + (q % grid.nx) * grid.dx, y = y0 + Math.floor(q / grid.nx) * grid.dy;
    for (let j = 0; j < pd.nViews; j++) {
      const s = -x * sin[j] + y * cos[j];
      if (s > S || s < -S) {
        area[j] += cell;
        first[j] += s * cell;
      }
    }
  }
  return { area, first };
}

/** Share of views whose estimate may exceed the one taken (robust to a few outlying views). */
const UPPER_SHARE = 0.05;

/**
 * The mass from the views' estimates: their 95th percentile, not their mean. An outline drawn
 * round the body often leaves out the arms, the table or a holder; a view sees them only when
 * they lie in its measured strip, so the views that see most are the least short of the truth.
 */
export function upperMass(perView: Float64Array): number {
  const sorted = Array.from(perView).sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.floor((1 - UPPER_SHARE) * sorted.length))];
}

/** Spread of the views' mass estimates, (max - min) / median: how far the outline filled with water is from agreeing with the data. */
export function outlineSpread(measured: MeasuredMoments, beyond: { area: Float64Array }, muWater: number): number {
  const m0 = Array.from(measured.m0, (m, j) => m + muWater * beyond.area[j]).sort((a, b) => a - b);
  return (m0[m0.length - 1] - m0[0]) / m0[m0.length >> 1];
}

/** The object's moments if the outline held water-equivalent material (mu_w) outside each view's strip (mass: upperMass). */
export function outlineMoments(pd: ParallelDomain, measured: MeasuredMoments, beyond: { area: Float64Array; first: Float64Array }, muWater: number): ObjectMoments {
  const m0 = measured.m0.map((m, j) => m + muWater * beyond.area[j]);
  const m1 = measured.m1.map((m, j) => m + muWater * beyond.first[j]);
  return objectMomentsFrom(pd.angles, m0, m1, upperMass(m0));
}
