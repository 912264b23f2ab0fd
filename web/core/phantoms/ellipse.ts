// Phantoms made of uniform ellipses: exact line integrals and rasterization.
// Line integral through an ellipse = density x chord length (Kak & Slaney 1988, ch. 3.1, the
// worked ellipse example; here in the general ray form, REFERENCES.md [ellipse-projection], [ellipsoid-chord]).
import type { ImageGrid } from '../image';
import { gridOrigin } from '../image';

/** A uniform ellipse, mm; `value` adds to whatever lies beneath (1/mm). */
export interface Ellipse {
  cx: number;
  cy: number;
  /** Semi-axis along the ellipse's own x axis before rotation, mm. */
  a: number;
  /** Semi-axis along its own y axis, mm. */
  b: number;
  /** Counter-clockwise rotation from +x, degrees. */
  phiDeg: number;
  value: number;
}

export interface EllipsePhantom {
  name: string;
  ellipses: Ellipse[];
  /** mu of water at the phantom's energy, 1/mm (for HU). */
  muWater: number;
  /** Radius of a circle about the origin containing the whole object, mm. */
  radius: number;
}

/** Length of the chord of ray (px, py) + t (dx, dy), |d| = 1, through ellipse e, mm. */
export function chord(e: Ellipse, px: number, py: number, dx: number, dy: number): number {
  const phi = (e.phiDeg * Math.PI) / 180;
  const c = Math.cos(phi), s = Math.sin(phi);
  const rx = px - e.cx, ry = py - e.cy;
  const qx = (c * rx + s * ry) / e.a, qy = (-s * rx + c * ry) / e.b;
  const ex = (c * dx + s * dy) / e.a, ey = (-s * dx + c * dy) / e.b;
  const alpha = ex * ex + ey * ey;
  const beta = qx * ex + qy * ey;
  const gamma = qx * qx + qy * qy - 1;
  const disc = beta * beta - alpha * gamma;
  return disc > 0 ? (2 * Math.sqrt(disc)) / alpha : 0;
}

/** Exact line integral of the phantom along a ray (unit direction). */
export function lineIntegral(p: EllipsePhantom, px: number, py: number, dx: number, dy: number): number {
  let sum = 0;
  for (const e of p.ellipses) sum += e.value * chord(e, px, py, dx, dy);
  return sum;
}

/** True when point (x, y) lies inside ellipse e. */
export function inside(e: Ellipse, x: number, y: number): boolean {
  const phi = (e.phiDeg * Math.PI) / 180;
  const c = Math.cos(phi), s = Math.sin(phi);
  const rx = x - e.cx, ry = y - e.cy;
  const u = (c * rx + s * ry) / e.a, v = (-s * rx + c * ry) / e.b;
  return u * u + v * v <= 1;
}

/** Phantom value at a point, 1/mm. */
export function valueAt(p: EllipsePhantom, x: number, y: number): number {
  let v = 0;
  for (const e of p.ellipses) if (inside(e, x, y)) v += e.value;
  return v;
}

/**
 * Rasterizes the phantom on a grid, averaging `sub` x `sub` samples per pixel (partial-volume
 * edges, as a detector-resolution ground truth would have them).
 */
export function rasterize(p: EllipsePhantom, grid: ImageGrid, sub = 4): Float32Array {
  const out = new Float32Array(grid.nx * grid.ny);
  const { x0, y0 } = gridOrigin(grid);
  for (let j = 0; j < grid.ny; j++) {
    for (let i = 0; i < grid.nx; i++) {
      let acc = 0;
      for (let sj = 0; sj < sub; sj++) {
        for (let si = 0; si < sub; si++) {
          const x = x0 + (i - 0.5 + (si + 0.5) / sub) * grid.dx;
          const y = y0 + (j - 0.5 + (sj + 0.5) / sub) * grid.dy;
          acc += valueAt(p, x, y);
        }
      }
      out[j * grid.nx + i] = acc / (sub * sub);
    }
  }
  return out;
}

/** Radius of the smallest circle about the origin that holds every ellipse (boundary sampled). */
export function boundingRadius(ellipses: Ellipse[]): number {
  let r = 0;
  for (const e of ellipses) {
    const phi = (e.phiDeg * Math.PI) / 180;
    for (let k = 0; k < 720; k++) {
      const t = (k * Math.PI) / 360;
      const x = e.a * Math.cos(t), y = e.b * Math.sin(t);
      r = Math.max(r, Math.hypot(e.cx + x * Math.cos(phi) - y * Math.sin(phi), e.cy + x * Math.sin(phi) + y * Math.cos(phi)));
    }
  }
  return r * 1.001;
}
