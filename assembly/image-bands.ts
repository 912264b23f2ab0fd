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
 * Then clears what it read, border included (the part with j0 = 0 also the first border line,
 * the part with j1 = ny the last one and the trailing float), so the accumulators are ready
 * for the next adjoint without a separate zeroing pass.
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
      const zero = f32x4.splat(0);
      let i = 0;
      for (; i + 4 <= nx; i += 4) {
        const q = col + <usize>i * colStep;
        let t = f32x4.splat(load<f32>(q));
        t = f32x4.replace_lane(t, 1, load<f32>(q + colStep));
        t = f32x4.replace_lane(t, 2, load<f32>(q + 2 * colStep));
        t = f32x4.replace_lane(t, 3, load<f32>(q + 3 * colStep));
        store<f32>(q, 0);
        store<f32>(q + colStep, 0);
        store<f32>(q + 2 * colStep, 0);
        store<f32>(q + 3 * colStep, 0);
        const o = <usize>i << 2;
        v128.store(row + o, f32x4.add(v128.load(row + o), f32x4.add(v128.load(src + o), t)));
        v128.store(src + o, zero);
      }
      for (; i < nx; i++) {
        const q = col + <usize>i * colStep;
        stf(row, i, ldf(row, i) + (ldf(src, i) + load<f32>(q)));
        store<f32>(q, 0);
        stf(src, i, 0);
      }
      // The border cells of this line: first and last of the acc row and of the accT column.
      stf(acc, (j + 1) * px, 0);
      stf(acc, (j + 1) * px + px - 1, 0);
      stf(accT, j + 1, 0);
      stf(accT, (px - 1) * py + j + 1, 0);
    }
    if (j0 == 0) clearLine(acc, accT, px, py, 0);
    if (j1 == ny) {
      clearLine(acc, accT, px, py, ny + 1);
      stf(acc, px * py, 0);
      stf(accT, px * py, 0);
    }
  }
}

/** Zeroes padded line y (0 .. ny+1) of acc (a row) and of accT (a column, stride py). */
@inline function clearLine(acc: usize, accT: usize, px: i32, py: i32, y: i32): void {
  memory.fill(acc + (<usize>(y * px) << 2), 0, <usize>px << 2);
  for (let x = 0; x < px; x++) stf(accT, x * py + y, 0);
}
