// The boundary of a mask as closed polygons (mm), to draw a mask over an image without sending
// the mask itself: the pixel edges between inside and outside, chained into rings with the
// inside on the left (outer rings counter-clockwise, holes clockwise, x right and y up), then
// simplified (Douglas & Peucker 1973, REFERENCES.md [douglas-peucker]) to within a fraction of a
// pixel. Before simplification the rings enclose exactly the mask's pixels.
import { gridOrigin, type ImageGrid } from '../image';

export type Ring = [number, number][];

/** Directions along pixel edges: right, up, left, down (lattice units). */
const DIRS: ReadonlyArray<readonly [number, number]> = [[1, 0], [0, 1], [-1, 0], [0, -1]];

/**
 * Directed boundary edges on the lattice of pixel corners ((nx + 1) x (ny + 1) vertices): from
 * each vertex, the directions (0..3) of the edges leaving it, inside on the left.
 */
function boundaryEdges(mask: Uint8Array, nx: number, ny: number): Map<number, number[]> {
  const out = new Map<number, number[]>();
  const at = (i: number, j: number) => i >= 0 && j >= 0 && i < nx && j < ny && mask[j * nx + i] > 0;
  const add = (i: number, j: number, d: number) => {
    const v = j * (nx + 1) + i;
    const list = out.get(v);
    if (list) list.push(d);
    else out.set(v, [d]);
  };
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      if (!at(i, j)) continue;
      if (!at(i, j - 1)) add(i, j, 0); // bottom edge, going right
      if (!at(i + 1, j)) add(i + 1, j, 1); // right edge, going up
      if (!at(i, j + 1)) add(i + 1, j + 1, 2); // top edge, going left
      if (!at(i - 1, j)) add(i, j + 1, 3); // left edge, going down
    }
  }
  return out;
}

/**
 * Chains the edges into closed rings of lattice vertices; at a corner shared by two diagonal
 * pixels the left turn keeps them apart (4-connected parts).
 */
function chain(edges: Map<number, number[]>, nx: number): Ring[] {
  const rings: Ring[] = [];
  const w = nx + 1;
  for (const [start, dirs] of edges) {
    while (dirs.length) {
      const ring: Ring = [];
      let v = start, d = dirs.pop()!;
      for (;;) {
        const i = v % w, j = (v - i) / w;
        ring.push([i, j]);
        v = (j + DIRS[d][1]) * w + i + DIRS[d][0];
        if (v === start) break; // closed (a vertex visited twice splits its ring in two closed ones)
        const next = edges.get(v);
        if (!next?.length) break;
        // Left turn, then straight on, then right.
        const pick = [(d + 1) % 4, d, (d + 3) % 4].find((c) => next.includes(c));
        if (pick === undefined) break;
        next.splice(next.indexOf(pick), 1);
        d = pick;
      }
      rings.push(ring);
    }
  }
  return rings;
}

/** Distance from p to the segment a-b. */
function segmentDistance(p: [number, number], a: [number, number], b: [number, number]): number {
  const dx = b[0] - a[0], dy = b[1] - a[1];
  const len2 = dx * dx + dy * dy;
  const t = len2 > 0 ? Math.max(0, Math.min(1, ((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / len2)) : 0;
  return Math.hypot(p[0] - a[0] - t * dx, p[1] - a[1] - t * dy);
}

/** Douglas-Peucker on an open run of points: the points to keep (first and last always). */
function simplifyRun(points: Ring, tolerance: number): Ring {
  const keep = new Uint8Array(points.length);
  keep[0] = keep[points.length - 1] = 1;
  const stack: Array<[number, number]> = [[0, points.length - 1]];
  while (stack.length) {
    const [a, b] = stack.pop()!;
    let far = -1, dist = tolerance;
    for (let k = a + 1; k < b; k++) {
      const d = segmentDistance(points[k], points[a], points[b]);
      if (d > dist) [far, dist] = [k, d];
    }
    if (far < 0) continue;
    keep[far] = 1;
    stack.push([a, far], [far, b]);
  }
  return points.filter((_, k) => keep[k]);
}

/** A closed ring simplified: split at its first point and the point farthest from it. */
export function simplifyRing(ring: Ring, tolerance: number): Ring {
  if (ring.length <= 4) return ring;
  let far = 0, dist = -1;
  ring.forEach((p, k) => {
    const d = Math.hypot(p[0] - ring[0][0], p[1] - ring[0][1]);
    if (d > dist) [far, dist] = [k, d];
  });
  const first = simplifyRun(ring.slice(0, far + 1), tolerance);
  const second = simplifyRun([...ring.slice(far), ring[0]], tolerance);
  return [...first, ...second.slice(1, -1)];
}

/**
 * The boundary rings of a mask on `grid` (mm, pixel edges half a pixel from the centres),
 * simplified to within `tolerance` pixels (0: the exact pixel edges).
 */
export function maskContour(mask: Uint8Array, grid: ImageGrid, tolerance = 0.5): Ring[] {
  const { x0, y0 } = gridOrigin(grid);
  const rings = chain(boundaryEdges(mask, grid.nx, grid.ny), grid.nx);
  return rings.map((r) => (tolerance > 0 ? simplifyRing(r, tolerance) : r))
    .map((r) => r.map(([i, j]) => [x0 + (i - 0.5) * grid.dx, y0 + (j - 0.5) * grid.dy] as [number, number]));
}
