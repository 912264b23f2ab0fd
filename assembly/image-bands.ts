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
 * out[j, i] = sum over c < count, in order, of (acc_c[j+1, i+1] + accT_c[i+1, j+1]), for rows
 * [j0, j1): each chunk's value is rounded once, then added to the running sum (the host adds
 * unpadded chunks the same way when memories are private). `table` holds count pairs of byte
 * addresses (i32): acc_0, accT_0, acc_1, accT_1, ... (accumulators of josephAdjoint2d).
 */
export function unpadSumRows(table: usize, count: i32, nx: i32, ny: i32, j0: i32, j1: i32, out: usize): void {
  const px = nx + 2;
  const py = ny + 2;
  const colStep = <usize>py << 2;
  memory.fill(out + (<usize>(j0 * nx) << 2), 0, <usize>((j1 - j0) * nx) << 2);
  // Chunk by chunk, row by row: consecutive rows read neighbouring floats of the same accT
  // columns, which stay in cache.
  for (let c = 0; c < count; c++) {
    const acc = <usize>ldi(table, 2 * c);
    const accT = <usize>ldi(table, 2 * c + 1);
    for (let j = j0; j < j1; j++) {
      const row = out + (<usize>(j * nx) << 2);
      const src = acc + (<usize>((j + 1) * px + 1) << 2);
      // accT element (i+1, j+1) sits at (i+1) py + j+1: one column per i.
      const col = accT + (<usize>(py + j + 1) << 2);
      let i = 0;
      for (; i + 4 <= nx; i += 4) {
        const q = col + <usize>i * colStep;
        let t = f32x4.splat(load<f32>(q));
        t = f32x4.replace_lane(t, 1, load<f32>(q + colStep));
        t = f32x4.replace_lane(t, 2, load<f32>(q + 2 * colStep));
        t = f32x4.replace_lane(t, 3, load<f32>(q + 3 * colStep));
        const o = <usize>i << 2;
        v128.store(row + o, f32x4.add(v128.load(row + o), f32x4.add(v128.load(src + o), t)));
      }
      for (; i < nx; i++) stf(row, i, ldf(row, i) + (ldf(src, i) + load<f32>(col + <usize>i * colStep)));
    }
  }
}
