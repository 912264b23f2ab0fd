// Where an image sits on a panel: zoom about a centre point (mm). At zoom 1 the whole grid
// fits the panel. Screen y grows downwards while image y (anterior) grows upwards.
import type { ImageGrid } from '../../core/image';
import type { Point } from './measure';

export interface ViewState {
  /** Magnification relative to fitting the grid in the panel. */
  zoom: number;
  /** Image point (mm) at the panel centre. */
  centre: Point;
}

export const INITIAL_VIEW: ViewState = { zoom: 1, centre: { x: 0, y: 0 } };

/** Zoom limits. */
export const MIN_ZOOM = 0.25;
export const MAX_ZOOM = 32;

/** Screen pixels per mm on a panel of width w and height h. */
export function scaleFor(g: ImageGrid, w: number, h: number, view: ViewState): number {
  return Math.min(w / (g.nx * g.dx), h / (g.ny * g.dy)) * view.zoom;
}

/** Image point (mm) to panel pixel. */
export function toScreen(p: Point, g: ImageGrid, w: number, h: number, view: ViewState): Point {
  const s = scaleFor(g, w, h, view);
  return { x: w / 2 + (p.x - view.centre.x) * s, y: h / 2 - (p.y - view.centre.y) * s };
}

/** Panel pixel to image point (mm). */
export function toImage(q: Point, g: ImageGrid, w: number, h: number, view: ViewState): Point {
  const s = scaleFor(g, w, h, view);
  return { x: view.centre.x + (q.x - w / 2) / s, y: view.centre.y - (q.y - h / 2) / s };
}

/** Zooms by `factor` keeping the image point under panel pixel q fixed. */
export function zoomAbout(view: ViewState, factor: number, q: Point, g: ImageGrid, w: number, h: number): ViewState {
  const zoom = Math.min(MAX_ZOOM, Math.max(MIN_ZOOM, view.zoom * factor));
  const p = toImage(q, g, w, h, view);
  const next = { zoom, centre: view.centre };
  const s = scaleFor(g, w, h, next);
  return { zoom, centre: { x: p.x - (q.x - w / 2) / s, y: p.y + (q.y - h / 2) / s } };
}

/** Moves the view by a drag of (dx, dy) panel pixels. */
export function pan(view: ViewState, dx: number, dy: number, g: ImageGrid, w: number, h: number): ViewState {
  const s = scaleFor(g, w, h, view);
  return { zoom: view.zoom, centre: { x: view.centre.x - dx / s, y: view.centre.y + dy / s } };
}
