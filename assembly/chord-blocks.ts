// Dense symmetric blocks of the chord systems (one block per chord, web/core/dbp/coupled-solve.ts),
// f64, stored as packed lower triangles row by row: entry (i, k), k <= i, at i (i + 1) / 2 + k.
// The block table holds CHORD_TABLE_STRIDE i32 per block: [packed offset, vector offset, size,
// Gram rows offset, Gram rows count], offsets in f64 elements from the arrays' byte addresses.
// Cholesky factorization row by row (Cholesky-Banachiewicz), triangular solves and products
// along contiguous rows (Golub & Van Loan, Matrix Computations, 4th ed., section 4.2, from memory).

export const CHORD_TABLE_STRIDE: i32 = 5;

@inline function entry(table: usize, b: i32, k: i32): i32 {
  return load<i32>(table + ((<usize>(b * CHORD_TABLE_STRIDE + k)) << 2));
}

@inline function at(base: usize, i: i32): usize {
  return base + (<usize>i << 3);
}

/** sum_k a[k] b[k] over n f64 (two lanes at a time). */
@inline function dot(a: usize, b: usize, n: i32): f64 {
  let acc = f64x2.splat(0);
  let k = 0;
  for (; k + 1 < n; k += 2) acc = f64x2.add(acc, f64x2.mul(v128.load(at(a, k)), v128.load(at(b, k))));
  let s = f64x2.extract_lane(acc, 0) + f64x2.extract_lane(acc, 1);
  if (k < n) s += load<f64>(at(a, k)) * load<f64>(at(b, k));
  return s;
}

/** y[k] += c x[k] over n f64. */
@inline function axpy(y: usize, x: usize, c: f64, n: i32): void {
  const cv = f64x2.splat(c);
  let k = 0;
  for (; k + 1 < n; k += 2) v128.store(at(y, k), f64x2.add(v128.load(at(y, k)), f64x2.mul(cv, v128.load(at(x, k)))));
  if (k < n) store<f64>(at(y, k), load<f64>(at(y, k)) + c * load<f64>(at(x, k)));
}

/** Blocks [b0, b1): packed = G^T G (lower half), G the block's Gram rows (rows x size, row-major). */
export function chordGram(table: usize, b0: i32, b1: i32, rows: usize, mats: usize): void {
  for (let b = b0; b < b1; b++) {
    const p = at(mats, entry(table, b, 0)), n = entry(table, b, 2);
    const g0 = at(rows, entry(table, b, 3)), nRows = entry(table, b, 4);
    memory.fill(p, 0, (<usize>(n * (n + 1)) >> 1) << 3);
    for (let r = 0; r < nRows; r++) {
      const g = g0 + (<usize>(r * n) << 3);
      for (let i = 0; i < n; i++) {
        const gi = load<f64>(at(g, i));
        if (gi == 0) continue;
        axpy(p + (<usize>((i * (i + 1)) >> 1) << 3), g, gi, i + 1);
      }
    }
  }
}

/** Blocks [b0, b1): adds diag[j] to entry (j, j) and sub[j] to entry (j + 1, j); diag and sub at the blocks' vector offsets. */
export function chordBand(table: usize, b0: i32, b1: i32, diag: usize, sub: usize, mats: usize): void {
  for (let b = b0; b < b1; b++) {
    const p = at(mats, entry(table, b, 0)), v = entry(table, b, 1), n = entry(table, b, 2);
    for (let j = 0; j < n; j++) {
      const d = at(p, ((j * (j + 1)) >> 1) + j);
      store<f64>(d, load<f64>(d) + load<f64>(at(diag, v + j)));
      if (j + 1 < n) {
        const s = at(p, (((j + 1) * (j + 2)) >> 1) + j);
        store<f64>(s, load<f64>(s) + load<f64>(at(sub, v + j)));
      }
    }
  }
}

/** Blocks [b0, b1): Cholesky factor in place; pivots below `floor` times the block's mean diagonal are raised to it. */
export function chordFactor(table: usize, b0: i32, b1: i32, mats: usize, floor: f64): void {
  for (let b = b0; b < b1; b++) {
    const p = at(mats, entry(table, b, 0)), n = entry(table, b, 2);
    let trace: f64 = 0;
    for (let i = 0; i < n; i++) trace += load<f64>(at(p, ((i * (i + 1)) >> 1) + i));
    const least = floor * (trace > 0 ? trace / <f64>n : 1.0);
    for (let i = 0; i < n; i++) {
      const ri = at(p, (i * (i + 1)) >> 1);
      for (let k = 0; k <= i; k++) {
        const rk = at(p, (k * (k + 1)) >> 1);
        const s = load<f64>(at(ri, k)) - dot(ri, rk, k);
        if (k == i) store<f64>(at(ri, i), Math.sqrt(Math.max(s, least)));
        else store<f64>(at(ri, k), s / load<f64>(at(rk, k)));
      }
    }
  }
}

/** Blocks [b0, b1): z = (L L^T)^-1 r per block (forward, then backward by rows). */
export function chordSolve(table: usize, b0: i32, b1: i32, mats: usize, r: usize, z: usize): void {
  for (let b = b0; b < b1; b++) {
    const p = at(mats, entry(table, b, 0)), n = entry(table, b, 2);
    const rv = at(r, entry(table, b, 1)), zv = at(z, entry(table, b, 1));
    for (let i = 0; i < n; i++) {
      const ri = at(p, (i * (i + 1)) >> 1);
      store<f64>(at(zv, i), (load<f64>(at(rv, i)) - dot(ri, zv, i)) / load<f64>(at(ri, i)));
    }
    for (let i = n - 1; i >= 0; i--) {
      const ri = at(p, (i * (i + 1)) >> 1);
      const xi = load<f64>(at(zv, i)) / load<f64>(at(ri, i));
      store<f64>(at(zv, i), xi);
      axpy(zv, ri, -xi, i);
    }
  }
}

/** Blocks [b0, b1): y = L (L^T x) per block; `scratch` holds at least the largest block's size. */
export function chordMultiply(table: usize, b0: i32, b1: i32, mats: usize, x: usize, y: usize, scratch: usize): void {
  for (let b = b0; b < b1; b++) {
    const p = at(mats, entry(table, b, 0)), n = entry(table, b, 2);
    const xv = at(x, entry(table, b, 1)), yv = at(y, entry(table, b, 1));
    memory.fill(scratch, 0, <usize>n << 3);
    for (let i = 0; i < n; i++) axpy(scratch, at(p, (i * (i + 1)) >> 1), load<f64>(at(xv, i)), i + 1);
    for (let i = 0; i < n; i++) store<f64>(at(yv, i), dot(at(p, (i * (i + 1)) >> 1), scratch, i + 1));
  }
}
