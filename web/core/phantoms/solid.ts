// Phantoms made of uniform solids (ellipsoids and finite elliptic cylinders along z): exact line
// integrals, point tests and voxelization.
//
// Ray through an ellipsoid (REFERENCES.md [ellipsoid-chord]): with the ray x(t) = s + t d (|d| = 1) and the
// ellipsoid (x - c)^T M (x - c) <= 1, alpha = d^T M d, beta = d^T M (s - c),
// gamma = (s - c)^T M (s - c) - 1, the chord is 2 sqrt(beta^2 - alpha gamma) / alpha.
// A finite elliptic cylinder is the same quadratic in x and y, intersected with the slab
// |z - cz| <= half length. Line integral = density x chord.
import { volumeOrigin, type VolumeGrid } from '../volume';

/** A uniform solid, mm; `value` adds to whatever lies beneath (1/mm). */
export interface Solid {
  shape: 'ellipsoid' | 'cylinder';
  cx: number;
  cy: number;
  cz: number;
  /** Semi-axes along the solid's own x and y (before rotation), mm. */
  a: number;
  b: number;
  /** Semi-axis along z (ellipsoid) or half length (cylinder), mm. */
  c: number;
  /** Counter-clockwise rotation about the z axis from +x, degrees. */
  phiDeg: number;
  value: number;
}

export interface SolidPhantom {
  name: string;
  solids: Solid[];
  /** mu of water at the phantom's energy, 1/mm (for HU). */
  muWater: number;
  /** Radius of a cylinder about the z axis containing the whole object, mm. */
  radius: number;
  /** Half height of that cylinder, mm. */
  halfHeight: number;
}

/** Rotation (cos, sin of the angle about z) and semi-axes of a solid, for mapping rays into its frame. */
export interface SolidFrame {
  co: number;
  si: number;
  a: number;
  b: number;
  c: number;
}

export function solidFrame(e: Solid): SolidFrame {
  const phi = (e.phiDeg * Math.PI) / 180;
  return { co: Math.cos(phi), si: Math.sin(phi), a: e.a, b: e.b, c: e.c };
}

/**
 * Length of the ray q + t e inside the unit solid (unit ball, or unit-radius cylinder with
 * |z| <= 1), where q and e are the ray's origin and direction in the solid's frame scaled by its
 * semi-axes (so t keeps the ray's own length unit).
 */
export function scaledChord(shape: Solid['shape'], qx: number, qy: number, qz: number, ex: number, ey: number, ez: number): number {
  if (shape === 'ellipsoid') {
    const alpha = ex * ex + ey * ey + ez * ez;
    const beta = qx * ex + qy * ey + qz * ez;
    const gamma = qx * qx + qy * qy + qz * qz - 1;
    const disc = beta * beta - alpha * gamma;
    return disc > 0 ? (2 * Math.sqrt(disc)) / alpha : 0;
  }
  // Cylinder: t interval of the elliptic section, then of the slab |qz + t ez| <= 1.
  let t0 = -Infinity, t1 = Infinity;
  const alpha = ex * ex + ey * ey;
  if (alpha < 1e-18) {
    if (qx * qx + qy * qy > 1) return 0;
  } else {
    const beta = qx * ex + qy * ey;
    const disc = beta * beta - alpha * (qx * qx + qy * qy - 1);
    if (disc <= 0) return 0;
    const h = Math.sqrt(disc);
    t0 = (-beta - h) / alpha;
    t1 = (-beta + h) / alpha;
  }
  if (Math.abs(ez) < 1e-18) {
    if (Math.abs(qz) > 1) return 0;
  } else {
    const za = (-1 - qz) / ez, zb = (1 - qz) / ez;
    t0 = Math.max(t0, Math.min(za, zb));
    t1 = Math.min(t1, Math.max(za, zb));
  }
  return t1 > t0 ? t1 - t0 : 0;
}

/** True when point (x, y, z) lies inside solid e. */
export function insideSolid(e: Solid, x: number, y: number, z: number): boolean {
  const phi = (e.phiDeg * Math.PI) / 180;
  const co = Math.cos(phi), si = Math.sin(phi);
  const rx = x - e.cx, ry = y - e.cy;
  const u = (co * rx + si * ry) / e.a, v = (-si * rx + co * ry) / e.b, w = (z - e.cz) / e.c;
  return e.shape === 'ellipsoid' ? u * u + v * v + w * w <= 1 : u * u + v * v <= 1 && Math.abs(w) <= 1;
}

/** Phantom value at a point, 1/mm. */
export function solidValueAt(p: SolidPhantom, x: number, y: number, z: number): number {
  let v = 0;
  for (const e of p.solids) if (insideSolid(e, x, y, z)) v += e.value;
  return v;
}

/** Axis-aligned bounding box of a solid: [xmin, xmax, ymin, ymax, zmin, zmax], mm. */
export function solidBounds(e: Solid): [number, number, number, number, number, number] {
  const phi = (e.phiDeg * Math.PI) / 180;
  const hx = Math.hypot(e.a * Math.cos(phi), e.b * Math.sin(phi));
  const hy = Math.hypot(e.a * Math.sin(phi), e.b * Math.cos(phi));
  return [e.cx - hx, e.cx + hx, e.cy - hy, e.cy + hy, e.cz - e.c, e.cz + e.c];
}

/**
 * Voxelizes the phantom: each voxel gets the mean of sub^3 samples (partial volume at edges).
 * Solids are convex, so a voxel whose eight corners are inside is wholly inside and skips the
 * sampling.
 */
export function voxelize(p: SolidPhantom, grid: VolumeGrid, sub = 3): Float32Array {
  const out = new Float32Array(grid.nx * grid.ny * grid.nz);
  const { x0, y0, z0 } = volumeOrigin(grid);
  const range = (lo: number, hi: number, o: number, d: number, n: number): [number, number] =>
    [Math.max(0, Math.floor((lo - o) / d)), Math.min(n - 1, Math.ceil((hi - o) / d))];
  for (const e of p.solids) {
    const [xa, xb, ya, yb, za, zb] = solidBounds(e);
    const [i0, i1] = range(xa, xb, x0, grid.dx, grid.nx);
    const [j0, j1] = range(ya, yb, y0, grid.dy, grid.ny);
    const [k0, k1] = range(za, zb, z0, grid.dz, grid.nz);
    for (let k = k0; k <= k1; k++) {
      for (let j = j0; j <= j1; j++) {
        for (let i = i0; i <= i1; i++) {
          const x = x0 + i * grid.dx, y = y0 + j * grid.dy, z = z0 + k * grid.dz;
          let corners = 0;
          for (let c = 0; c < 8; c++) {
            if (insideSolid(e, x + (c & 1 ? 0.5 : -0.5) * grid.dx, y + (c & 2 ? 0.5 : -0.5) * grid.dy, z + (c & 4 ? 0.5 : -0.5) * grid.dz)) corners++;
          }
          let frac = 1;
          if (corners < 8) {
            let hits = 0;
            for (let s = 0; s < sub * sub * sub; s++) {
              const fx = ((s % sub) + 0.5) / sub - 0.5, fy = ((Math.floor(s / sub) % sub) + 0.5) / sub - 0.5, fz = (Math.floor(s / (sub * sub)) + 0.5) / sub - 0.5;
              if (insideSolid(e, x + fx * grid.dx, y + fy * grid.dy, z + fz * grid.dz)) hits++;
            }
            frac = hits / (sub * sub * sub);
          }
          if (frac > 0) out[(k * grid.ny + j) * grid.nx + i] += e.value * frac;
        }
      }
    }
  }
  return out;
}
