// Zero-padded copies of a volume for the 3D Joseph projector (cone-joseph.ts), and the fold of
// its two adjoint accumulators back into a volume.
//
// Both padded layouts have one zero cell below and two above each axis (cell.ts):
// NX = nx + 3, NY = ny + 3, NZ = nz + 3 cells, voxel (i, j, k) at padded (i+1, j+1, k+1).
//   pad:  [NZ][NY][NX], x fastest (read by sweeps along y, which interpolate in x and z)
//   padT: [NZ][NX][NY], y fastest (read by sweeps along x, which interpolate in y and z)
// Padded planes are independent, so workers can fill (or own, in the adjoint) ranges of planes.
import { ldf, stf } from './memory';

/**
 * Fills padded planes [plane0, plane1) of pad and padT from the volume (nx x ny x nz, x
 * fastest, rows packed): padding planes become zero, inner planes get a zero border.
 */
export function padVolume(vol: usize, nx: i32, ny: i32, nz: i32, plane0: i32, plane1: i32, pad: usize, padT: usize): void {
  const NX = nx + 3, NY = ny + 3;
  const planeBytes = <usize>(NX * NY) << 2;
  for (let p = plane0; p < plane1; p++) {
    const a = pad + <usize>p * planeBytes;
    const t = padT + <usize>p * planeBytes;
    memory.fill(a, 0, planeBytes);
    memory.fill(t, 0, planeBytes);
    if (p < 1 || p > nz) continue;
    const src = vol + (<usize>(p - 1) * <usize>(nx * ny) << 2);
    for (let j = 0; j < ny; j++) {
      memory.copy(a + (<usize>((j + 1) * NX + 1) << 2), src + (<usize>(j * nx) << 2), <usize>nx << 2);
      for (let i = 0; i < nx; i++) stf(t, (i + 1) * NY + j + 1, ldf(src, j * nx + i));
    }
  }
}

/** Writes slices [k0, k1) of out = acc + accT (inner cells of the two padded layouts). */
export function unpadVolume(acc: usize, accT: usize, nx: i32, ny: i32, nz: i32, k0: i32, k1: i32, out: usize): void {
  const NX = nx + 3, NY = ny + 3;
  const plane = NX * NY;
  for (let k = k0; k < k1; k++) {
    const a = acc + (<usize>((k + 1) * plane) << 2);
    const t = accT + (<usize>((k + 1) * plane) << 2);
    const dst = out + (<usize>k * <usize>(nx * ny) << 2);
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        stf(dst, j * nx + i, ldf(a, (j + 1) * NX + i + 1) + ldf(t, (i + 1) * NY + j + 1));
      }
    }
  }
}
