// Drawing knowledge on the image panels: an ellipse dragged from its centre, a polygon clicked
// corner by corner, and the marks drawn over every panel (known regions, the outline, the
// outline the data suggest, what is being drawn). Points are mm in the image frame (y anterior).
import { polygonArea, type Outline } from '../../core/knowledge';
import type { Ring } from '../../core/knowledge/mask-contour';
import type { Point } from './measure';

export interface EllipseDraft {
  cx: number;
  cy: number;
  /** Semi-axis along x, mm. */
  a: number;
  /** Semi-axis along y, mm. */
  b: number;
  /** Counter-clockwise turn of the a axis, degrees. */
  angleDeg?: number;
}

/** The axis-aligned ellipse dragged from its centre to a corner of its bounding box. */
export function ellipseFromDrag(centre: Point, corner: Point): EllipseDraft {
  return { cx: centre.x, cy: centre.y, a: Math.abs(corner.x - centre.x), b: Math.abs(corner.y - centre.y) };
}

/** A polygon being clicked: its corners so far, and whether it is closed. */
export interface PolygonDraft {
  points: Point[];
  closed: boolean;
}

export const EMPTY_POLYGON: PolygonDraft = { points: [], closed: false };

/**
 * A click at `p` (mm): a new corner; a click within `snap` mm of the first corner closes the
 * polygon (once it has 3 corners); a click within `snap` of the last corner adds nothing (a
 * double-click's second press). A click after closing starts a new polygon.
 */
export function addPolygonPoint(d: PolygonDraft, p: Point, snap: number): PolygonDraft {
  if (d.closed) return { points: [p], closed: false };
  const near = (q: Point | undefined) => !!q && Math.hypot(q.x - p.x, q.y - p.y) <= snap;
  if (d.points.length >= 3 && near(d.points[0])) return closePolygon(d).draft;
  if (near(d.points[d.points.length - 1])) return d;
  return { points: [...d.points, p], closed: false };
}

/** Closes the polygon, or says why it cannot be (fewer than 3 corners, no area). */
export function closePolygon(d: PolygonDraft): { draft: PolygonDraft; problem?: string } {
  if (d.points.length < 3) return { draft: d, problem: `a polygon needs at least 3 corners; it has ${d.points.length}` };
  if (Math.abs(polygonArea(d.points.map((p) => [p.x, p.y] as [number, number]))) < 1e-6) return { draft: d, problem: 'the corners enclose no area' };
  return { draft: { points: d.points, closed: true } };
}

/** The polygon without its last corner. */
export function undoPolygonPoint(d: PolygonDraft): PolygonDraft {
  return { points: d.points.slice(0, -1), closed: false };
}

/** Points around an ellipse (closed ring, `n` points), turned by its angle. */
export function ellipsePoints(e: EllipseDraft, n = 96): Point[] {
  const t = ((e.angleDeg ?? 0) * Math.PI) / 180;
  return Array.from({ length: n }, (_, k) => {
    const s = (2 * Math.PI * k) / n;
    const u = e.a * Math.cos(s), v = e.b * Math.sin(s);
    return { x: e.cx + u * Math.cos(t) - v * Math.sin(t), y: e.cy + u * Math.sin(t) + v * Math.cos(t) };
  });
}

const ringPoints = (r: Ring): Point[] => r.map(([x, y]) => ({ x, y }));

/** The rings that draw an outline; a mask's are its stored boundary (`contours` by mask name). */
export function outlineRings(o: Outline, contours: Record<string, Ring[]>): Point[][] {
  switch (o.shape) {
    case 'ellipse':
      return [ellipsePoints(o)];
    case 'polygon':
      return [o.points.map(([x, y]) => ({ x, y }))];
    case 'mask':
      return (contours[o.input] ?? []).map(ringPoints);
  }
}

/** How a mark is drawn: a known region, the outline, the outline the data suggest, or what is being drawn. */
export type MarkStyle = 'known' | 'outline' | 'suggested' | 'draft';

/** Something drawn over every panel. */
export interface Mark {
  style: MarkStyle;
  rings: Point[][];
  /** False for a polygon still being clicked. */
  closed: boolean;
  /** A short label drawn at `at` (the known region's number). */
  label?: string;
  at?: Point;
}
