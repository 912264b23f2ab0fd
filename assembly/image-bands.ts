// Band-parallel versions of the projector's image plumbing (arith.ts padImage2d / unpadAdd2d):
// each call handles image rows [j0, j1), so workers sharing one memory split the work instead
// of one worker doing it all. Layouts as in arith.ts: `pad` is (nx+2) x (ny+2), x fastest;
// `padT` the same image transposed (y fastest); borders stay zero (the host zeroes them once).
import { ldf, ldi, stf } from './memory';

/** Copies rows [j0, j1) of img (nx x ny, x fastest) into the interiors of pad and padT. */
export function padImageRows(img: usize, nx: i32, ny: i32, j0: i32, j1: i32, pad: usize, padT: usize): void {
  const px = nx + 2;
  const py = ny + 2;
  for (let j = j0; j < j1; j++) {
    memory.copy(pad + (<usize>((j + 1) * px + 1) << 2), img + (<usize>(j * nx) << 2), <usize>nx << 2);
    for (let i = 0; i < nx; i++) stf(padT, (i + 1) * py + j + 1, ldf(img, j * nx + i));
  }
}

/**
 * out[j, i] = sum over w < count of acc_w[j+1, i+1] + accT_w[i+1, j+1], for rows [j0, j1).
 * `table` holds count pairs of byte addresses (i32): acc_0, accT_0, acc_1, accT_1, ...
 * (the per-worker accumulators of joseph.ts josephAdjoint2d).
 */
export function unpadSumRows(table: usize, count: i32, nx: i32, ny: i32, j0: i32, j1: i32, out: usize): void {
  const px = nx + 2;
  const py = ny + 2;
  for (let j = j0; j < j1; j++) {
    const row = out + (<usize>(j * nx) << 2);
    memory.fill(row, 0, <usize>nx << 2);
    for (let w = 0; w < count; w++) {
      const acc = <usize>ldi(table, 2 * w);
      const accT = <usize>ldi(table, 2 * w + 1);
      const src = acc + (<usize>((j + 1) * px + 1) << 2);
      let i = 0;
      for (; i + 4 <= nx; i += 4) {
        const o = <usize>i << 2;
        v128.store(row + o, f32x4.add(v128.load(row + o), v128.load(src + o)));
      }
      for (; i < nx; i++) stf(row, i, ldf(row, i) + ldf(src, i));
      for (i = 0; i < nx; i++) stf(row, i, ldf(row, i) + ldf(accT, (i + 1) * py + j + 1));
    }
  }
}
