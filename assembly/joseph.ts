// Joseph's ray-driven forward projector for 2D images and its exact adjoint.
// See rays.ts for the ray tables and the method's reference. Both directions walk the same
// steps with the same arithmetic, so <A x, y> = <x, A^T y> holds to float rounding.
//
// Images are given padded (arith.ts padImage2d): `pad` is x-fastest ((nx+2) x (ny+2)) and is
// read by y-major sweeps; `padT` is y-fastest and read by x-major sweeps, so that both sweeps
// interpolate between neighbours adjacent in memory (one 64-bit load per lane).
import { clampIndex, floorOffsets, ldf, ldi, stf, MAGIC, MAGIC_BITS } from './memory';
import { buildRayTable } from './rays';

/**
 * Forward projection of views [view0, view1): out[v*nCh + k] = line integral (mm * image unit).
 * `table` is scratch for one ray table (rayTableFloats(nCh) floats).
 */
export function josephForward2d(
  pad: usize, padT: usize, nx: i32, ny: i32, dx: f32, dy: f32, x0: f32, y0: f32,
  views: usize, kind: i32, view0: i32, view1: i32, nCh: i32, u0: f32, pitch: f32,
  out: usize, table: usize,
): void {
  const nPad = (nCh + 3) & ~3;
  for (let v = view0; v < view1; v++) {
    buildRayTable(views, v, kind, nCh, u0, pitch, nx, ny, dx, dy, x0, y0, table);
    const row = out + (<usize>v * <usize>nCh << 2);
    for (let k = 0; k < nPad; k += 4) {
      const sx = sweepGroup(padT, ny + 2, ny, table, nPad, k, 0);
      const sy = sweepGroup(pad, nx + 2, nx, table, nPad, k, 5);
      const r = f32x4.add(
        f32x4.mul(sx, v128.load(table + (<usize>(2 * nPad + k) << 2))),
        f32x4.mul(sy, v128.load(table + (<usize>(7 * nPad + k) << 2))),
      );
      if (k + 4 <= nCh) {
        v128.store(row + (<usize>k << 2), r);
      } else {
        if (k < nCh) stf(row, k, f32x4.extract_lane(r, 0));
        if (k + 1 < nCh) stf(row, k + 1, f32x4.extract_lane(r, 1));
        if (k + 2 < nCh) stf(row, k + 2, f32x4.extract_lane(r, 2));
      }
    }
  }
}

/**
 * Adjoint (back-projection in the transpose sense) of views [view0, view1): adds A^T y into the
 * padded accumulators acc (x fastest) and accT (y fastest); arith.ts unpadAdd2d folds them
 * into an image. y is the sinogram (nViews x nCh).
 */
export function josephAdjoint2d(
  acc: usize, accT: usize, nx: i32, ny: i32, dx: f32, dy: f32, x0: f32, y0: f32,
  views: usize, kind: i32, view0: i32, view1: i32, nCh: i32, u0: f32, pitch: f32,
  sino: usize, table: usize,
): void {
  const nPad = (nCh + 3) & ~3;
  for (let v = view0; v < view1; v++) {
    buildRayTable(views, v, kind, nCh, u0, pitch, nx, ny, dx, dy, x0, y0, table);
    const row = sino + (<usize>v * <usize>nCh << 2);
    for (let k = 0; k < nPad; k += 4) {
      let y: v128;
      if (k + 4 <= nCh) {
        y = v128.load(row + (<usize>k << 2));
      } else {
        y = f32x4.splat(0);
        if (k < nCh) y = f32x4.replace_lane(y, 0, ldf(row, k));
        if (k + 1 < nCh) y = f32x4.replace_lane(y, 1, ldf(row, k + 1));
        if (k + 2 < nCh) y = f32x4.replace_lane(y, 2, ldf(row, k + 2));
      }
      scatterGroup(accT, ny + 2, ny, table, nPad, k, 0, f32x4.mul(y, v128.load(table + (<usize>(2 * nPad + k) << 2))));
      scatterGroup(acc, nx + 2, nx, table, nPad, k, 5, f32x4.mul(y, v128.load(table + (<usize>(7 * nPad + k) << 2))));
    }
  }
}

/** Step range [lo, hi] shared by the four lanes of group k (union of the lane ranges). */
@inline function groupLo(table: usize, nPad: i32, k: i32, first: i32): i32 {
  const p = (first + 3) * nPad + k;
  return min(min(ldi(table, p), ldi(table, p + 1)), min(ldi(table, p + 2), ldi(table, p + 3)));
}
@inline function groupHi(table: usize, nPad: i32, k: i32, first: i32): i32 {
  const p = (first + 4) * nPad + k;
  return max(max(ldi(table, p), ldi(table, p + 1)), max(ldi(table, p + 2), ldi(table, p + 3)));
}

/** Sums of linearly interpolated samples along the four rays of group k (one sweep). */
@inline function sweepGroup(
  pad: usize, lineLen: i32, n: i32, table: usize, nPad: i32, k: i32, first: i32,
): v128 {
  let acc = f32x4.splat(0);
  const lo = groupLo(table, nPad, k, first);
  const hi = groupHi(table, nPad, k, first);
  if (lo > hi) return acc;
  const A = v128.load(table + (<usize>(first * nPad + k) << 2));
  const B = v128.load(table + (<usize>((first + 1) * nPad + k) << 2));
  const zero = f32x4.splat(0);
  const top = f32x4.splat(<f32>(n + 1));
  const magic = f32x4.splat(MAGIC);
  const magicBits = i32x4.splat(MAGIC_BITS);
  const lineBytes = <usize>lineLen << 2;
  let line = pad + <usize>(lo + 1) * lineBytes;
  let fi = <f32>lo;
  for (let i = lo; i <= hi; i++) {
    const t = clampIndex(f32x4.add(A, f32x4.mul(B, f32x4.splat(fi))), zero, top);
    const fl = f32x4.floor(t);
    const off = floorOffsets(fl, magic, magicBits);
    const frac = f32x4.sub(t, fl);
    let ab = v128.load64_lane(line + <usize>i32x4.extract_lane(off, 0), zero, 0);
    ab = v128.load64_lane(line + <usize>i32x4.extract_lane(off, 1), ab, 1);
    let cd = v128.load64_lane(line + <usize>i32x4.extract_lane(off, 2), zero, 0);
    cd = v128.load64_lane(line + <usize>i32x4.extract_lane(off, 3), cd, 1);
    const a = v128.shuffle<f32>(ab, cd, 0, 2, 4, 6);
    const b = v128.shuffle<f32>(ab, cd, 1, 3, 5, 7);
    acc = f32x4.add(acc, f32x4.add(a, f32x4.mul(frac, f32x4.sub(b, a))));
    fi += 1;
    line += lineBytes;
  }
  return acc;
}

/** Transpose of sweepGroup: spreads the lane values `val` back along the same samples. */
@inline function scatterGroup(
  pad: usize, lineLen: i32, n: i32, table: usize, nPad: i32, k: i32, first: i32, val: v128,
): void {
  const lo = groupLo(table, nPad, k, first);
  const hi = groupHi(table, nPad, k, first);
  if (lo > hi) return;
  const A = v128.load(table + (<usize>(first * nPad + k) << 2));
  const B = v128.load(table + (<usize>((first + 1) * nPad + k) << 2));
  const zero = f32x4.splat(0);
  const top = f32x4.splat(<f32>(n + 1));
  const magic = f32x4.splat(MAGIC);
  const magicBits = i32x4.splat(MAGIC_BITS);
  const lineBytes = <usize>lineLen << 2;
  let line = pad + <usize>(lo + 1) * lineBytes;
  let fi = <f32>lo;
  for (let i = lo; i <= hi; i++) {
    const t = clampIndex(f32x4.add(A, f32x4.mul(B, f32x4.splat(fi))), zero, top);
    const fl = f32x4.floor(t);
    const off = floorOffsets(fl, magic, magicBits);
    const frac = f32x4.sub(t, fl);
    const hiPart = f32x4.mul(val, frac);
    const loPart = f32x4.sub(val, hiPart);
    addPair(line + <usize>i32x4.extract_lane(off, 0), f32x4.extract_lane(loPart, 0), f32x4.extract_lane(hiPart, 0));
    addPair(line + <usize>i32x4.extract_lane(off, 1), f32x4.extract_lane(loPart, 1), f32x4.extract_lane(hiPart, 1));
    addPair(line + <usize>i32x4.extract_lane(off, 2), f32x4.extract_lane(loPart, 2), f32x4.extract_lane(hiPart, 2));
    addPair(line + <usize>i32x4.extract_lane(off, 3), f32x4.extract_lane(loPart, 3), f32x4.extract_lane(hiPart, 3));
    fi += 1;
    line += lineBytes;
  }
}

@inline function addPair(p: usize, a: f32, b: f32): void {
  store<f32>(p, load<f32>(p) + a);
  store<f32>(p + 4, load<f32>(p + 4) + b);
}
