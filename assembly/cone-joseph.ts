// Joseph's ray-driven projector in 3D for cone beams on a flat detector, and its exact adjoint.
//
// P. M. Joseph, "An improved algorithm for reprojecting rays through pixel images", IEEE Trans.
// Med. Imaging 1(3):192-196, 1982, extended to volumes: a ray steps one voxel plane at a time
// along x or y (whichever its direction is more aligned with) and samples the volume there by
// bilinear interpolation in the other two axes; the sum times the step length
// w = pixel / |cos(angle to the stepping axis)| approximates the line integral. Rays must lean
// less than 45 degrees out of the xy plane (the host checks), so z is never the stepping axis.
//
// Ray of view v, row r, channel k: from the source S to C + u_k U + v_r V (u_k = u0 + k pitchU,
// v_r = v0 + r pitchV, U and V normalized). Four neighbouring channels run as SIMD lanes.
// For a sweep along axis M with minor axes 1 (contiguous in memory) and 2 (z), the padded
// coordinates at step i are t1 = A1 + B1 i and t2 = A2 + B2 i (cone-volume.ts layouts; sweeps
// along x read padT, sweeps along y read pad). Forward and adjoint walk the same steps with the
// same weights, so <A x, y> = <x, A^T y> up to float rounding.
//
// The adjoint owns padded planes [own0, own1) of the accumulators: it writes only there, so
// workers given disjoint plane ranges can share one pair of accumulators.
import { VIEW_STRIDE } from './abi';
import { bilinear } from './cone-backproject';
import { cellFrac, cellLo, cellRound, clampCoord } from './cell';
import { ldf, stf } from './memory';

/**
 * Forward projection of views [view0, view1): out[(v nRows + r) nCh + k] = line integral
 * (mm x volume unit). pad / padT are the padded copies (padVolume).
 */
export function josephForwardCone(
  pad: usize, padT: usize, nx: i32, ny: i32, nz: i32, dx: f32, dy: f32, dz: f32, x0: f32, y0: f32, z0: f32,
  views: usize, view0: i32, view1: i32, nCh: i32, nRows: i32, u0: f32, pitchU: f32, v0: f32, pitchV: f32,
  out: usize,
): void {
  coneRays(false, pad, padT, nx, ny, nz, dx, dy, dz, x0, y0, z0, views, view0, view1, nCh, nRows, u0, pitchU, v0, pitchV, out, 0, nz + 3);
}

/**
 * Adjoint of views [view0, view1): adds A^T sino into the padded accumulators acc (pad layout)
 * and accT (padT layout), writing only padded planes [own0, own1). unpadVolume folds them.
 */
export function josephAdjointCone(
  acc: usize, accT: usize, nx: i32, ny: i32, nz: i32, dx: f32, dy: f32, dz: f32, x0: f32, y0: f32, z0: f32,
  views: usize, view0: i32, view1: i32, nCh: i32, nRows: i32, u0: f32, pitchU: f32, v0: f32, pitchV: f32,
  sino: usize, own0: i32, own1: i32,
): void {
  coneRays(true, acc, accT, nx, ny, nz, dx, dy, dz, x0, y0, z0, views, view0, view1, nCh, nRows, u0, pitchU, v0, pitchV, sino, own0, own1);
}

@inline function coneRays(
  adjoint: bool, pad: usize, padT: usize, nx: i32, ny: i32, nz: i32, dx: f32, dy: f32, dz: f32, x0: f32, y0: f32, z0: f32,
  views: usize, view0: i32, view1: i32, nCh: i32, nRows: i32, u0: f32, pitchU: f32, v0: f32, pitchV: f32,
  data: usize, own0: i32, own1: i32,
): void {
  const laneI = i32x4(0, 1, 2, 3);
  const zLo: f32 = <f32>(own0 - 1), zHi: f32 = <f32>own1;
  // The forward projection takes four neighbouring channels per step; the adjoint four channels
  // a quarter of the detector apart, whose cells never meet (neighbouring lanes' scattered adds
  // to the same or overlapping cells stall on store-to-load forwarding).
  const spread = adjoint ? (nCh + 3) >> 2 : 1;
  const kStep = adjoint ? 1 : 4;
  const kEnd = adjoint ? spread : nCh;
  for (let v = view0; v < view1; v++) {
    const b = views + (<usize>(v * VIEW_STRIDE) << 2);
    const sx = ldf(b, 0), sy = ldf(b, 1), sz = ldf(b, 2);
    const ul = Mathf.sqrt(ldf(b, 6) * ldf(b, 6) + ldf(b, 7) * ldf(b, 7) + ldf(b, 8) * ldf(b, 8));
    const vl = Mathf.sqrt(ldf(b, 9) * ldf(b, 9) + ldf(b, 10) * ldf(b, 10) + ldf(b, 11) * ldf(b, 11));
    const ux = ldf(b, 6) / ul, uy = ldf(b, 7) / ul, uz = ldf(b, 8) / ul;
    const vx = ldf(b, 9) / vl, vy = ldf(b, 10) / vl, vz = ldf(b, 11) / vl;
    for (let r = 0; r < nRows; r++) {
      const vr = v0 + <f32>r * pitchV;
      const bx = ldf(b, 3) - sx + vr * vx, by = ldf(b, 4) - sy + vr * vy, bz = ldf(b, 5) - sz + vr * vz;
      const row = data + ((<usize>v * <usize>nRows + <usize>r) * <usize>nCh << 2);
      for (let k = 0; k < kEnd; k += kStep) {
        const chan = i32x4.add(i32x4.splat(k), i32x4.mul(laneI, i32x4.splat(spread)));
        const u = f32x4.add(f32x4.splat(u0), f32x4.mul(f32x4.convert_i32x4_s(chan), f32x4.splat(pitchU)));
        const ddx = f32x4.add(f32x4.splat(bx), f32x4.mul(u, f32x4.splat(ux)));
        const ddy = f32x4.add(f32x4.splat(by), f32x4.mul(u, f32x4.splat(uy)));
        const ddz = f32x4.add(f32x4.splat(bz), f32x4.mul(u, f32x4.splat(uz)));
        const len = f32x4.sqrt(f32x4.add(f32x4.add(f32x4.mul(ddx, ddx), f32x4.mul(ddy, ddy)), f32x4.mul(ddz, ddz)));
        const active = i32x4.lt_s(chan, i32x4.splat(nCh));
        const xMajor = v128.and(f32x4.ge(f32x4.abs(ddx), f32x4.abs(ddy)), active);
        const yMajor = v128.andnot(active, xMajor);
        const p = row + (<usize>k << 2);
        if (adjoint) {
          const y = gatherLanes(row, chan, active);
          sweep(padT, true, y, xMajor, ddx, ddy, ddz, len, sx, sy, sz, x0, y0, z0, dx, dy, dz, nx, ny, nz, zLo, zHi, own0, own1);
          sweep(pad, true, y, yMajor, ddy, ddx, ddz, len, sy, sx, sz, y0, x0, z0, dy, dx, dz, ny, nx, nz, zLo, zHi, own0, own1);
        } else {
          const zero = f32x4.splat(0);
          const s = f32x4.add(
            sweep(padT, false, zero, xMajor, ddx, ddy, ddz, len, sx, sy, sz, x0, y0, z0, dx, dy, dz, nx, ny, nz, zLo, zHi, own0, own1),
            sweep(pad, false, zero, yMajor, ddy, ddx, ddz, len, sy, sx, sz, y0, x0, z0, dy, dx, dz, ny, nx, nz, zLo, zHi, own0, own1),
          );
          storeLanes(p, s, nCh - k);
        }
      }
    }
  }
}

/**
 * One sweep (along axis M) for the lanes in `mask`: returns the line integrals (forward), or
 * scatters y times the same weights (adjoint) and returns zero. d* are the ray directions
 * (major, contiguous minor, z), s* the source, o* the centre of voxel 0 and p* the voxel size
 * along those axes; nM, n1, n2 the voxel counts.
 */
@inline function sweep(
  data: usize, adjoint: bool, y: v128, mask: v128,
  dM: v128, d1: v128, d2: v128, len: v128,
  sM: f32, s1: f32, s2: f32, oM: f32, o1: f32, o2: f32, pM: f32, p1: f32, p2: f32,
  nM: i32, n1: i32, n2: i32, zLo: f32, zHi: f32, own0: i32, own1: i32,
): v128 {
  const zero = f32x4.splat(0);
  if (!v128.any_true(mask)) return zero;
  const inv = f32x4.div(f32x4.splat(1), dM);
  const q1 = f32x4.mul(d1, inv), q2 = f32x4.mul(d2, inv);
  const far = f32x4.splat(-1.0e6);
  const one = f32x4.splat(1);
  const A1 = v128.bitselect(f32x4.add(f32x4.div(f32x4.add(f32x4.splat(s1 - o1), f32x4.mul(f32x4.splat(oM - sM), q1)), f32x4.splat(p1)), one), far, mask);
  const A2 = v128.bitselect(f32x4.add(f32x4.div(f32x4.add(f32x4.splat(s2 - o2), f32x4.mul(f32x4.splat(oM - sM), q2)), f32x4.splat(p2)), one), far, mask);
  const B1 = v128.bitselect(f32x4.mul(q1, f32x4.splat(pM / p1)), zero, mask);
  const B2 = v128.bitselect(f32x4.mul(q2, f32x4.splat(pM / p2)), zero, mask);
  const W = v128.bitselect(f32x4.mul(f32x4.mul(len, f32x4.abs(inv)), f32x4.splat(pM)), zero, mask);
  const top1: f32 = <f32>(n1 + 1), top2: f32 = <f32>(n2 + 1);
  const lo2 = Mathf.max(0, zLo), hi2 = Mathf.min(top2, zHi);
  let range = pack(nM, -1);
  if (i32x4.extract_lane(mask, 0) != 0) range = unite(range, laneRange(f32x4.extract_lane(A1, 0), f32x4.extract_lane(B1, 0), top1, f32x4.extract_lane(A2, 0), f32x4.extract_lane(B2, 0), lo2, hi2, nM));
  if (i32x4.extract_lane(mask, 1) != 0) range = unite(range, laneRange(f32x4.extract_lane(A1, 1), f32x4.extract_lane(B1, 1), top1, f32x4.extract_lane(A2, 1), f32x4.extract_lane(B2, 1), lo2, hi2, nM));
  if (i32x4.extract_lane(mask, 2) != 0) range = unite(range, laneRange(f32x4.extract_lane(A1, 2), f32x4.extract_lane(B1, 2), top1, f32x4.extract_lane(A2, 2), f32x4.extract_lane(B2, 2), lo2, hi2, nM));
  if (i32x4.extract_lane(mask, 3) != 0) range = unite(range, laneRange(f32x4.extract_lane(A1, 3), f32x4.extract_lane(B1, 3), top1, f32x4.extract_lane(A2, 3), f32x4.extract_lane(B2, 3), lo2, hi2, nM));
  const lo = packLo(range), hi = packHi(range);
  if (lo > hi) return zero;

  const t1Top = f32x4.splat(top1), t2Top = f32x4.splat(top2);
  const lineLen = n1 + 3;
  const plane = i32x4.splat(lineLen * (nM + 3));
  const planeBytes = <usize>(lineLen * (nM + 3)) << 2;
  const lineBytes = <usize>lineLen << 2;
  let line = data + <usize>(lo + 1) * lineBytes;
  let fi = <f32>lo;
  if (!adjoint) {
    let acc = zero;
    for (let i = lo; i <= hi; i++) {
      const t1 = clampCoord(f32x4.add(A1, f32x4.mul(B1, f32x4.splat(fi))), t1Top);
      const t2 = clampCoord(f32x4.add(A2, f32x4.mul(B2, f32x4.splat(fi))), t2Top);
      const r1 = cellRound(t1), r2 = cellRound(t2);
      const off = i32x4.shl(i32x4.add(i32x4.mul(cellLo(r2), plane), cellLo(r1)), 2);
      acc = f32x4.add(acc, bilinear(line, off, planeBytes, cellFrac(t1, r1), cellFrac(t2, r2)));
      fi += 1;
      line += lineBytes;
    }
    return f32x4.mul(acc, W);
  }
  const val = f32x4.mul(y, W);
  const ownLo = i32x4.splat(own0), ownHi = i32x4.splat(own1);
  const oneI = i32x4.splat(1);
  for (let i = lo; i <= hi; i++) {
    const t1 = clampCoord(f32x4.add(A1, f32x4.mul(B1, f32x4.splat(fi))), t1Top);
    const t2 = clampCoord(f32x4.add(A2, f32x4.mul(B2, f32x4.splat(fi))), t2Top);
    const r1 = cellRound(t1), r2 = cellRound(t2);
    const kz = cellLo(r2);
    const off = i32x4.shl(i32x4.add(i32x4.mul(kz, plane), cellLo(r1)), 2);
    const f1 = cellFrac(t1, r1), f2 = cellFrac(t2, r2);
    // Transpose of bilinear(): weights (1-f1)(1-f2), f1(1-f2), (1-f1)f2, f1 f2, as the pairs
    // (low cell, high cell) of each lane in plane kz (l1, h1) and plane kz + 1 (l2, h2).
    const g2 = f32x4.mul(val, f2), g1 = f32x4.sub(val, g2);
    const h1 = f32x4.mul(g1, f1), l1 = f32x4.sub(g1, h1);
    const h2 = f32x4.mul(g2, f1), l2 = f32x4.sub(g2, h2);
    const a01 = v128.shuffle<f32>(l1, h1, 0, 4, 1, 5), a23 = v128.shuffle<f32>(l1, h1, 2, 6, 3, 7);
    const b01 = v128.shuffle<f32>(l2, h2, 0, 4, 1, 5), b23 = v128.shuffle<f32>(l2, h2, 2, 6, 3, 7);
    // Planes this part may write (other parts own the rest).
    const kz1 = i32x4.add(kz, oneI);
    const mine = i32x4.bitmask(v128.and(i32x4.ge_s(kz, ownLo), i32x4.lt_s(kz, ownHi)));
    const mine1 = i32x4.bitmask(v128.and(i32x4.ge_s(kz1, ownLo), i32x4.lt_s(kz1, ownHi)));
    // One lane at a time: neighbouring rays may share cells.
    const p0 = line + <usize>i32x4.extract_lane(off, 0);
    if (mine & 1) v128.store64_lane(p0, f32x4.add(v128.load64_lane(p0, a01, 0), a01), 0);
    if (mine1 & 1) v128.store64_lane(p0 + planeBytes, f32x4.add(v128.load64_lane(p0 + planeBytes, b01, 0), b01), 0);
    const p1 = line + <usize>i32x4.extract_lane(off, 1);
    if (mine & 2) v128.store64_lane(p1, f32x4.add(v128.load64_lane(p1, a01, 1), a01), 1);
    if (mine1 & 2) v128.store64_lane(p1 + planeBytes, f32x4.add(v128.load64_lane(p1 + planeBytes, b01, 1), b01), 1);
    const p2 = line + <usize>i32x4.extract_lane(off, 2);
    if (mine & 4) v128.store64_lane(p2, f32x4.add(v128.load64_lane(p2, a23, 0), a23), 0);
    if (mine1 & 4) v128.store64_lane(p2 + planeBytes, f32x4.add(v128.load64_lane(p2 + planeBytes, b23, 0), b23), 0);
    const p3 = line + <usize>i32x4.extract_lane(off, 3);
    if (mine & 8) v128.store64_lane(p3, f32x4.add(v128.load64_lane(p3, a23, 1), a23), 1);
    if (mine1 & 8) v128.store64_lane(p3 + planeBytes, f32x4.add(v128.load64_lane(p3 + planeBytes, b23, 1), b23), 1);
    fi += 1;
    line += lineBytes;
  }
  return zero;
}

/** Steps [lo, hi] of one lane whose two coordinates lie in [0, top1] and [lo2, hi2], one step wider. */
@inline function laneRange(A1: f32, B1: f32, top1: f32, A2: f32, B2: f32, lo2: f32, hi2: f32, nSteps: i32): i64 {
  return narrow(narrow(pack(0, nSteps - 1), A1, B1, 0, top1), A2, B2, lo2, hi2);
}

/** Narrows the step range p to steps i with A + B i in [a, b], keeping one step of margin. */
@inline function narrow(p: i64, A: f32, B: f32, a: f32, b: f32): i64 {
  let lo = packLo(p), hi = packHi(p);
  if (lo > hi) return p;
  if (Mathf.abs(B) < 1e-9) return A >= a && A <= b ? p : pack(lo, lo - 1);
  const i1 = (a - A) / B, i2 = (b - A) / B;
  const first = Mathf.floor(Mathf.min(i1, i2)) - 1;
  const last = Mathf.ceil(Mathf.max(i1, i2)) + 1;
  if (first > <f32>lo) lo = <i32>Mathf.min(first, <f32>(hi + 1));
  if (last < <f32>hi) hi = <i32>Mathf.max(last, <f32>(lo - 1));
  return pack(lo, hi);
}

/** Union (hull) of two step ranges; empty ranges (lo > hi) leave the other unchanged. */
@inline function unite(a: i64, b: i64): i64 {
  if (packLo(b) > packHi(b)) return a;
  if (packLo(a) > packHi(a)) return b;
  return pack(min(packLo(a), packLo(b)), max(packHi(a), packHi(b)));
}

@inline function pack(lo: i32, hi: i32): i64 {
  return (<i64>lo << 32) | <i64>(<u32>hi);
}
@inline function packLo(p: i64): i32 {
  return <i32>(p >> 32);
}
@inline function packHi(p: i64): i32 {
  return <i32>p;
}

/** The floats of channels `chan` (i32 lanes) of a detector row, zero where `active` is not set. */
@inline function gatherLanes(row: usize, chan: v128, active: v128): v128 {
  let y = f32x4.splat(0);
  if (i32x4.extract_lane(active, 0) != 0) y = f32x4.replace_lane(y, 0, load<f32>(row + (<usize>i32x4.extract_lane(chan, 0) << 2)));
  if (i32x4.extract_lane(active, 1) != 0) y = f32x4.replace_lane(y, 1, load<f32>(row + (<usize>i32x4.extract_lane(chan, 1) << 2)));
  if (i32x4.extract_lane(active, 2) != 0) y = f32x4.replace_lane(y, 2, load<f32>(row + (<usize>i32x4.extract_lane(chan, 2) << 2)));
  if (i32x4.extract_lane(active, 3) != 0) y = f32x4.replace_lane(y, 3, load<f32>(row + (<usize>i32x4.extract_lane(chan, 3) << 2)));
  return y;
}

/** Stores the first n (1..4, or more meaning 4) lanes of s at p. */
@inline function storeLanes(p: usize, s: v128, n: i32): void {
  if (n >= 4) {
    v128.store(p, s);
    return;
  }
  stf(p, 0, f32x4.extract_lane(s, 0));
  if (n > 1) stf(p, 1, f32x4.extract_lane(s, 1));
  if (n > 2) stf(p, 2, f32x4.extract_lane(s, 2));
}
