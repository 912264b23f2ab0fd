// FDK backprojection for views whose central ray and detector u axis lie in the xy plane (a
// circular orbit about z with an untilted flat panel, the usual C-arm and on-board imager).
//
// For such a view the voxel's distance from the source along the central ray, ln = (p - S).n,
// and its detector column u = |C - S| (p - S).U / ln do not depend on z; only the row
//   v = |C - S| (p - S).V / ln
// does, and linearly (Feldkamp, Davis & Kress, J. Opt. Soc. Am. A 1(6):612-619, 1984; the
// geometry of cone-backproject.ts). So the column, its interpolation fraction and the distance
// weight (R / ln)^2 are computed once per (x, y, view), and the loop over z only steps v.
//
// Layouts (all floats):
// - volume: columns along z, [y][x][z], column stride nzs (a multiple of 4 >= nz; cells beyond nz
//   are scratch). columnsToSlab turns slices of it into the usual x-fastest slab.
// - filtered views as column pairs: per view (nCh + 2) columns c of `colStride` floats; column c
//   holds, for every padded row r (0 .. nRows + 2), the pair (P[r][c], P[r][c + 1]), P being
//   the padded block of coneFilterViews (cell.ts: cell 0 and cells after n are zero). One
//   16-byte load at pair (c, r) gives the four samples of a bilinear interpolation.
import { filterConeView } from './cone-filter';
import { CONE_VIEW_FLOATS, prepareConeViews } from './cone-backproject';
import { ldf, MAGIC, MAGIC_BITS } from './memory';

/** Floats per column of a view in column-pair layout: two per padded row, rounded to 4. */
export function pairColumnFloats(nRows: i32): i32 {
  return (2 * (nRows + 3) + 3) & ~3;
}

/**
 * Weights and filters views [view0, view1) of a chunk that starts at view chunk0 (as
 * coneFilterViews), each through `block` (one padded block of nRows + 3 rows of `stride`
 * floats, per worker), into column-pair layout at out + (v - chunk0) * (nCh + 2) * colStride.
 */
export function coneFilterPairs(
  proj: usize, nCh: i32, nRows: i32, chunk0: i32, view0: i32, view1: i32,
  views: usize, viewWeights: usize, u0: f32, pitchU: f32, v0: f32, pitchV: f32,
  H: usize, nPad: i32, twRe: usize, twIm: usize, bitrev: usize, re: usize, im: usize,
  block: usize, stride: i32, out: usize, colStride: i32,
): void {
  const viewBytes = <usize>(nCh + 2) * (<usize>colStride << 2);
  for (let v = view0; v < view1; v++) {
    filterConeView(proj, nCh, nRows, chunk0, v, views, viewWeights, u0, pitchU, v0, pitchV,
      H, nPad, twRe, twIm, bitrev, re, im, block, stride);
    toColumnPairs(block, nCh, nRows, stride, out + <usize>(v - chunk0) * viewBytes, colStride);
  }
}

/** Column pairs of one padded block (see the layout above). */
function toColumnPairs(block: usize, nCh: i32, nRows: i32, stride: i32, out: usize, colStride: i32): void {
  const rowBytes = <usize>stride << 2;
  const colBytes = <usize>colStride << 2;
  const rows = nRows + 3;
  let r = 0;
  // Two rows at a time: column c gets (P[r][c], P[r][c+1], P[r+1][c], P[r+1][c+1]), a 4 x 4
  // transpose of the rows r and r + 1 read at c and at c + 1.
  for (; r + 2 <= rows; r += 2) {
    const top = block + <usize>r * rowBytes;
    const bottom = top + rowBytes;
    const dst = out + (<usize>r << 3);
    let c = 0;
    for (; c + 4 <= nCh + 2; c += 4) {
      const o = <usize>c << 2;
      const a = v128.load(top + o), b = v128.load(top + o + 4);
      const e = v128.load(bottom + o), f = v128.load(bottom + o + 4);
      const ab0 = v128.shuffle<f32>(a, b, 0, 4, 1, 5), ab1 = v128.shuffle<f32>(a, b, 2, 6, 3, 7);
      const ef0 = v128.shuffle<f32>(e, f, 0, 4, 1, 5), ef1 = v128.shuffle<f32>(e, f, 2, 6, 3, 7);
      const p = dst + <usize>c * colBytes;
      v128.store(p, v128.shuffle<f32>(ab0, ef0, 0, 1, 4, 5));
      v128.store(p + colBytes, v128.shuffle<f32>(ab0, ef0, 2, 3, 6, 7));
      v128.store(p + 2 * colBytes, v128.shuffle<f32>(ab1, ef1, 0, 1, 4, 5));
      v128.store(p + 3 * colBytes, v128.shuffle<f32>(ab1, ef1, 2, 3, 6, 7));
    }
    for (; c < nCh + 2; c++) {
      const p = dst + <usize>c * colBytes;
      store<f32>(p, ldf(top, c));
      store<f32>(p, ldf(top, c + 1), 4);
      store<f32>(p, ldf(bottom, c), 8);
      store<f32>(p, ldf(bottom, c + 1), 12);
    }
  }
  for (; r < rows; r++) {
    const src = block + <usize>r * rowBytes;
    const dst = out + (<usize>r << 3);
    for (let c = 0; c < nCh + 2; c++) {
      store<f32>(dst + <usize>c * colBytes, ldf(src, c));
      store<f32>(dst + <usize>c * colBytes, ldf(src, c + 1), 4);
    }
  }
}

/**
 * Adds the backprojection of views [view0, view1) into the columns of rows [j0, j1) of a volume
 * in column layout (see above; nz slices, column stride nzs). `pairs` holds the chunk's views in
 * column-pair layout starting with view0; `scratch` CONE_VIEW_FLOATS per view. u0 / v0 are the
 * coordinates of channel 0 / row 0. Every view must have n.z = U.z = 0 (the host checks).
 */
export function backprojectConeAxial(
  vol: usize, nx: i32, nz: i32, nzs: i32, j0: i32, j1: i32,
  dx: f32, dy: f32, dz: f32, x0: f32, y0: f32, z0: f32,
  views: usize, view0: i32, view1: i32, scratch: usize,
  pairs: usize, nRows: i32, nCh: i32, colStride: i32, u0: f32, pitchU: f32, v0: f32, pitchV: f32,
  viewBlock: i32,
): void {
  prepareConeViews(views, view0, view1, scratch);
  // Views in blocks whose column pairs stay in the processor's cache while every column of the
  // band takes them in, one block after another (the sum over views keeps its order).
  for (let b0 = view0; b0 < view1; b0 += viewBlock) {
    backprojectBlock(vol, nx, nz, nzs, j0, j1, dx, dy, dz, x0, y0, z0, view0, b0, min(view1, b0 + viewBlock), scratch,
      pairs, nRows, nCh, colStride, u0, pitchU, v0, pitchV);
  }
}

/** backprojectConeAxial for views [b0, b1) of the chunk that starts at view0. */
function backprojectBlock(
  vol: usize, nx: i32, nz: i32, nzs: i32, j0: i32, j1: i32,
  dx: f32, dy: f32, dz: f32, x0: f32, y0: f32, z0: f32, view0: i32, b0: i32, b1: i32, scratch: usize,
  pairs: usize, nRows: i32, nCh: i32, colStride: i32, u0: f32, pitchU: f32, v0: f32, pitchV: f32,
): void {
  const colBytes = <usize>colStride << 2;
  const viewBytes = <usize>(nCh + 2) * colBytes;
  // Padded coordinates t (data cell k at t = k + 1), plus 1.5 (cell.ts) in the z loop.
  const shiftU: f32 = 1 - u0 / pitchU, shiftV: f32 = 1 - v0 / pitchV;
  const topU = <f32>(nCh + 1), topV = <f32>(nRows + 1);
  for (let j = j0; j < j1; j++) {
    const y = y0 + <f32>j * dy;
    for (let i = 0; i < nx; i++) {
      const x = x0 + <f32>i * dx;
      const col = vol + ((<usize>j * <usize>nx + <usize>i) * <usize>nzs << 2);
      for (let v = b0; v < b1; v++) {
        const c = scratch + (<usize>((v - view0) * CONE_VIEW_FLOATS) << 2);
        const px = x - ldf(c, 0), py = y - ldf(c, 1);
        const r = ldf(c, 13);
        const lnr = (px * ldf(c, 3) + py * ldf(c, 4)) / r; // ln / R
        if (!(lnr > 0)) continue;
        const w: f32 = 1.0 / lnr; // R / ln
        const mag = w * ldf(c, 12) / r; // |C - S| / ln
        const tu = (px * ldf(c, 6) + py * ldf(c, 7)) * mag / pitchU + shiftU;
        if (!(tu >= 0 && tu <= topU)) continue; // the column misses the detector: zeros only
        // Row coordinate at slice k: tv0 + k dtv (V may lean in x and y as well).
        const sv = mag / pitchV;
        const tv0 = (px * ldf(c, 9) + py * ldf(c, 10) + (z0 - ldf(c, 2)) * ldf(c, 11)) * sv + shiftV;
        const dtv = dz * ldf(c, 11) * sv;
        // Slices whose row lies inside (0, nRows + 1) ...
        let ka: f32 = 0, kb: f32 = <f32>nz;
        // ... and those a margin inside, where no group of four needs clamping.
        let sa: f32 = 0, sb: f32 = <f32>nz;
        if (dtv != 0) {
          const lo = -tv0 / dtv, hi = (topV - tv0) / dtv;
          const m = SAFE_MARGIN / Mathf.abs(dtv);
          ka = Mathf.max(ka, Mathf.min(lo, hi));
          kb = Mathf.min(kb, Mathf.max(lo, hi) + 1);
          sa = Mathf.max(sa, Mathf.min(lo, hi) + m);
          sb = Mathf.min(sb, Mathf.max(lo, hi) - m);
        } else if (!(tv0 > 0 && tv0 < topV)) {
          continue;
        } else if (!(tv0 > SAFE_MARGIN && tv0 < topV - SAFE_MARGIN)) {
          sb = 0;
        }
        if (!(ka < kb)) continue;
        const k0 = <i32>ka & ~3;
        const k1 = min(nzs, (<i32>Mathf.ceil(kb) + 3) & ~3);
        // Groups [s0, s1) lie wholly inside the margin (up to nz: lanes past it are scratch).
        let s0 = k1, s1 = k1;
        if (sa < sb) {
          s0 = max(k0, min(k1, (<i32>Mathf.ceil(sa) + 3) & ~3));
          s1 = max(s0, min(k1, <i32>sb & ~3));
        }
        const cu = <i32>tu;
        const fu = tu - <f32>cu;
        // u weights times the distance weight (R / ln)^2: the v interpolation is linear, so the
        // samples can carry it.
        const w2 = w * w;
        const wu = f32x4(w2 - w2 * fu, w2 * fu, w2 - w2 * fu, w2 * fu);
        // Byte address of pair (cu, lo) is column + lo * 8 with lo = round(t + 1.5) - 2: the
        // MAGIC bits and the -2 folded into the base (32-bit address arithmetic wraps).
        const base = pairs + <usize>(v - view0) * viewBytes + <usize>cu * colBytes - ((<usize>(MAGIC_BITS + 2)) << 3);
        // The loop carries t + 2 (t + 1.5 for the rounding, + 0.5 for the fraction).
        const t0 = tv0 + 2 + <f32>k0 * dtv;
        accumulateColumn(col, base, wu, t0, dtv, k0, s0, topV, true);
        accumulateColumn(col, base, wu, t0 + <f32>(s0 - k0) * dtv, dtv, s0, s1, topV, false);
        accumulateColumn(col, base, wu, t0 + <f32>(s1 - k0) * dtv, dtv, s1, k1, topV, true);
      }
    }
  }
}

/**
 * Row coordinates further than this (cells) from the detector's padded ends need no clamping:
 * well above the rounding of t stepped over a few thousand slices in float32.
 */
const SAFE_MARGIN: f32 = 0.25;

/**
 * Adds slices [k0, k1) (groups of four) of one view to a column: sample the view's column
 * pairs at base (see backprojectConeAxial) at row coordinates t + 2 = tt, tt + dtv, ...,
 * weighted by wu (u weights times the distance weight). `clamp`: keep t inside [0, topV].
 */
@inline function accumulateColumn(col: usize, base: usize, wu: v128, tt: f32, dtv: f32, k0: i32, k1: i32, topV: f32, clamp: bool): void {
  let t = f32x4.add(f32x4.splat(tt), f32x4.mul(f32x4(0, 1, 2, 3), f32x4.splat(dtv)));
  const step = f32x4.splat(4 * dtv);
  const magic = f32x4.splat(MAGIC);
  const magicHalf = f32x4.splat(MAGIC - 0.5);
  for (let k = k0; k < k1; k += 4) {
    const tc = clamp ? f32x4.pmin(f32x4.splat(topV + 2), f32x4.pmax(f32x4.splat(2), t)) : t;
    const rr = f32x4.add(tc, magicHalf); // round(t + 1.5) in the low mantissa bits
    const off = i32x4.shl(rr, 3);
    const fv = f32x4.sub(tc, f32x4.sub(rr, magic)); // t - lo
    const m0 = f32x4.mul(v128.load(base + <usize>i32x4.extract_lane(off, 0)), wu);
    const m1 = f32x4.mul(v128.load(base + <usize>i32x4.extract_lane(off, 1)), wu);
    const m2 = f32x4.mul(v128.load(base + <usize>i32x4.extract_lane(off, 2)), wu);
    const m3 = f32x4.mul(v128.load(base + <usize>i32x4.extract_lane(off, 3)), wu);
    // (top, bottom) of voxels 0, 1 and of 2, 3, then the four tops and the four bottoms.
    const s01 = f32x4.add(v128.shuffle<f32>(m0, m1, 0, 2, 4, 6), v128.shuffle<f32>(m0, m1, 1, 3, 5, 7));
    const s23 = f32x4.add(v128.shuffle<f32>(m2, m3, 0, 2, 4, 6), v128.shuffle<f32>(m2, m3, 1, 3, 5, 7));
    const tops = v128.shuffle<f32>(s01, s23, 0, 2, 4, 6);
    const bottoms = v128.shuffle<f32>(s01, s23, 1, 3, 5, 7);
    const p = col + (<usize>k << 2);
    v128.store(p, f32x4.add(v128.load(p), f32x4.add(tops, f32x4.mul(fv, f32x4.sub(bottoms, tops)))));
    t = f32x4.add(t, step);
  }
}

/**
 * Slices [k0, k1) of a volume in column layout (nx x ny columns of stride nzs) into `out`,
 * x fastest: out[((k - k0) ny + j) nx + i] = vol[(j nx + i) nzs + k].
 */
export function columnsToSlab(vol: usize, nx: i32, ny: i32, nzs: i32, k0: i32, k1: i32, out: usize): void {
  const slice = <usize>nx * <usize>ny;
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const at = <usize>j * <usize>nx + <usize>i;
      const src = vol + (at * <usize>nzs << 2);
      const dst = out + (at << 2);
      for (let k = k0; k < k1; k++) store<f32>(dst + (<usize>(k - k0) * slice << 2), load<f32>(src + (<usize>k << 2)));
    }
  }
}
