// What the user knows, turned into equations on the chords: the centre the chords pass through
// (the known region nearest the isocentre, so that the far side of the field of view is as close
// to it as possible), and on every chord that crosses a known region, the region's value as the
// mean of the profile over the nodes it covers. A mean, not every node: a physicist knows a
// region's HU as its mean (a real region has texture and noise), and pinning every node to it
// would force that texture's error onto the whole chord.
import { gridOrigin, type ImageGrid } from '../image';
import type { PlacedRegion } from '../knowledge';
import type { ChordEquation } from './chord-solve';
import type { ChordFamily, ChordLayout } from './chords';

/** Weight of a known-mean equation against one Hilbert sample. */
export const MEAN_WEIGHT = 30;
/** A chord must cross a known region over at least this many nodes for the region to count on it. */
const MIN_NODES = 2;

/** Coverage-weighted centre of a region on the grid, mm. */
export function regionCentroid(r: PlacedRegion, g: ImageGrid): { x: number; y: number } {
  const { x0, y0 } = gridOrigin(g);
  let s = 0, sx = 0, sy = 0;
  for (let q = 0; q < r.coverage.length; q++) {
    const c = r.coverage[q];
    if (c === 0) continue;
    s += c;
    sx += c * (x0 + (q % g.nx) * g.dx);
    sy += c * (y0 + Math.floor(q / g.nx) * g.dy);
  }
  return { x: sx / s, y: sy / s };
}

/** The region whose centroid lies nearest the isocentre (the larger one on a tie). */
export function centreRegion(regions: PlacedRegion[], g: ImageGrid): { region: PlacedRegion; x: number; y: number } {
  let best: { region: PlacedRegion; x: number; y: number; d: number } | undefined;
  for (const region of regions) {
    const c = regionCentroid(region, g);
    const d = Math.hypot(c.x, c.y);
    if (!best || d < best.d - 1e-6 || (Math.abs(d - best.d) <= 1e-6 && region.area > best.region.area)) best = { region, ...c, d };
  }
  return best!;
}

/** Nearest-pixel value of a grid array at (x, y); 0 off the grid. */
export function atPoint(data: Float32Array, g: ImageGrid, x: number, y: number): number {
  const { x0, y0 } = gridOrigin(g);
  const i = Math.round((x - x0) / g.dx), j = Math.round((y - y0) / g.dy);
  return i < 0 || j < 0 || i >= g.nx || j >= g.ny ? 0 : data[j * g.nx + i];
}

/** The known-mean equations of one chord (one per region it crosses inside the field of view). */
export function knownMeans(f: ChordFamily, c: ChordLayout, regions: PlacedRegion[], g: ImageGrid): ChordEquation[] {
  const out: ChordEquation[] = [];
  for (const r of regions) {
    const coef = new Float64Array(c.nodes.length);
    let n = 0;
    for (let j = c.inside0; j < c.inside1; j++) {
      const t = c.nodes[j];
      if (atPoint(r.coverage, g, f.cx + t * c.ex, f.cy + t * c.ey) >= 0.5) { coef[j] = 1; n++; }
    }
    if (n < MIN_NODES) continue;
    for (let j = 0; j < coef.length; j++) coef[j] /= n;
    out.push({ coef, target: r.mu, weight: MEAN_WEIGHT });
  }
  return out;
}
