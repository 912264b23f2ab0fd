// Resampling a volume onto another grid (trilinear; zero outside the source grid).
import { sameGrid } from './resample';
import { volumeOrigin, type VolumeGrid } from './volume';

/** Samples `src` (on grid `from`) at the voxel centres of grid `to`, trilinearly. */
export function resampleTrilinear(src: Float32Array, from: VolumeGrid, to: VolumeGrid): Float32Array {
  const out = new Float32Array(to.nx * to.ny * to.nz);
  const a = volumeOrigin(from), b = volumeOrigin(to);
  const at = (i: number, j: number, k: number) =>
    i < 0 || j < 0 || k < 0 || i >= from.nx || j >= from.ny || k >= from.nz ? 0 : src[(k * from.ny + j) * from.nx + i];
  // Bilinear in plane kk at the current (i0, j0, tx, ty): one closure for the whole volume.
  let i0 = 0, j0 = 0, tx = 0, ty = 0;
  const plane = (kk: number) =>
    (1 - ty) * ((1 - tx) * at(i0, j0, kk) + tx * at(i0 + 1, j0, kk)) + ty * ((1 - tx) * at(i0, j0 + 1, kk) + tx * at(i0 + 1, j0 + 1, kk));
  for (let k = 0; k < to.nz; k++) {
    const fz = (b.z0 + k * to.dz - a.z0) / from.dz;
    const k0 = Math.floor(fz), tz = fz - k0;
    for (let j = 0; j < to.ny; j++) {
      const fy = (b.y0 + j * to.dy - a.y0) / from.dy;
      j0 = Math.floor(fy);
      ty = fy - j0;
      for (let i = 0; i < to.nx; i++) {
        const fx = (b.x0 + i * to.dx - a.x0) / from.dx;
        i0 = Math.floor(fx);
        tx = fx - i0;
        out[(k * to.ny + j) * to.nx + i] = (1 - tz) * plane(k0) + tz * plane(k0 + 1);
      }
    }
  }
  return out;
}

/** True when two volume grids have the same sizes, spacings and centre. */
export function sameVolumeGrid(a: VolumeGrid, b: VolumeGrid): boolean {
  const eq = (x: number, y: number) => Math.abs(x - y) <= 1e-6 * Math.max(1, Math.abs(x), Math.abs(y));
  return sameGrid(a, b) && a.nz === b.nz && eq(a.dz, b.dz) && eq(a.cz, b.cz);
}
