// Voxel-driven cone-beam backprojection for FDK, bilinear on a flat detector.
//
// For voxel p and view v (source S, unit central ray n = (C - S)/|C - S|, unit detector axes U
// and V, all from the view table): ln = (p - S).n, and the ray through p meets the detector at
//   u = |C - S| (p - S).U / ln,   v = |C - S| (p - S).V / ln          (mm on the detector)
// with the FDK distance weight (R / ln)^2, R = -S.n the source-to-isocentre distance
// (L. A. Feldkamp, L. C. Davis, J. W. Kress, "Practical cone-beam algorithm", J. Opt. Soc. Am. A
// 1(6):612-619, 1984: the factor D^2 / (D - s)^2 of REFERENCES.md [fdk-1984]).
// ln, (p - S).U and (p - S).V are linear along x, so four voxels of a row advance together.
//
// Filtered projections come as coneFilterViews writes them: per view a block of nRows + 3 row
// slots of `stride` floats; slot 0 and slots nRows+1, nRows+2 are zero, and in each row cell 0
// and cells after nCh are zero. Coordinates are clamped onto that padding, so rays that miss the
// detector add nothing.
import { VIEW_STRIDE } from './abi';
import { clampTo } from './cell';
import { ldf, stf, MAGIC, MAGIC_BITS } from './memory';

/** Floats of per-view constants kept in the scratch buffer (see prepareConeViews). */
export const CONE_VIEW_FLOATS: i32 = 16;

/**
 * Per-view constants for views [view0, view1) into scratch (CONE_VIEW_FLOATS per view):
 * S(3), n(3), U(3), V(3) (unit vectors), |C - S|, R = -S.n.
 */
export function prepareConeViews(views: usize, view0: i32, view1: i32, scratch: usize): void {
  for (let v = view0; v < view1; v++) {
    const b = views + (<usize>(v * VIEW_STRIDE) << 2);
    const o = scratch + (<usize>((v - view0) * CONE_VIEW_FLOATS) << 2);
    const sx = <f64>ldf(b, 0), sy = <f64>ldf(b, 1), sz = <f64>ldf(b, 2);
    let nx = <f64>ldf(b, 3) - sx, ny = <f64>ldf(b, 4) - sy, nz = <f64>ldf(b, 5) - sz;
    const dist = Math.sqrt(nx * nx + ny * ny + nz * nz);
    nx /= dist; ny /= dist; nz /= dist;
    const ul = Math.sqrt(<f64>ldf(b, 6) * <f64>ldf(b, 6) + <f64>ldf(b, 7) * <f64>ldf(b, 7) + <f64>ldf(b, 8) * <f64>ldf(b, 8));
    const vl = Math.sqrt(<f64>ldf(b, 9) * <f64>ldf(b, 9) + <f64>ldf(b, 10) * <f64>ldf(b, 10) + <f64>ldf(b, 11) * <f64>ldf(b, 11));
    stf(o, 0, <f32>sx); stf(o, 1, <f32>sy); stf(o, 2, <f32>sz);
    stf(o, 3, <f32>nx); stf(o, 4, <f32>ny); stf(o, 5, <f32>nz);
    for (let c = 0; c < 3; c++) {
      stf(o, 6 + c, <f32>(<f64>ldf(b, 6 + c) / ul));
      stf(o, 9 + c, <f32>(<f64>ldf(b, 9 + c) / vl));
    }
    stf(o, 12, <f32>dist);
    stf(o, 13, <f32>(-(sx * nx + sy * ny + sz * nz)));
  }
}

/**
 * Adds the backprojection of views [view0, view1) into z slices [k0, k1) of a volume
 * (x fastest; row stride nxs, a multiple of 4 >= nx; columns beyond nx are scratch).
 * `filt` is the block of view0 (blocks follow each other, (nRows + 3) * stride floats each);
 * `scratch` holds CONE_VIEW_FLOATS per view. u0 / v0 are the coordinates of channel 0 / row 0.
 */
export function backprojectCone(
  vol: usize, nxs: i32, ny: i32, k0: i32, k1: i32,
  dx: f32, dy: f32, dz: f32, x0: f32, y0: f32, z0: f32,
  views: usize, view0: i32, view1: i32, scratch: usize,
  filt: usize, nRows: i32, stride: i32, nCh: i32, u0: f32, pitchU: f32, v0: f32, pitchV: f32,
): void {
  prepareConeViews(views, view0, view1, scratch);
  const lane = f32x4(0, 1, 2, 3);
  // Padded detector coordinates plus 1.5 (cell.ts), clamped to [1.5, n + 2.5].
  const lowC = f32x4.splat(1.5);
  const topU = f32x4.splat(<f32>nCh + 2.5);
  const topV = f32x4.splat(<f32>nRows + 2.5);
  const half = f32x4.splat(0.5);
  const magic = f32x4.splat(MAGIC);
  const strideV = i32x4.splat(stride);
  const rowBytes = <usize>stride << 2;
  const blockBytes = <usize>(nRows + 3) * rowBytes;
  const shiftUs: f32 = 2.5 - u0 / pitchU, shiftVs: f32 = 2.5 - v0 / pitchV;
  const shiftU = f32x4.splat(shiftUs);
  const shiftV = f32x4.splat(shiftVs);
  for (let k = k0; k < k1; k++) {
    const z = z0 + <f32>k * dz;
    for (let j = 0; j < ny; j++) {
      const y = y0 + <f32>j * dy;
      const dst = vol + ((<usize>k * <usize>ny + <usize>j) * <usize>nxs << 2);
      for (let v = view0; v < view1; v++) {
        const c = scratch + (<usize>((v - view0) * CONE_VIEW_FLOATS) << 2);
        const px = x0 - ldf(c, 0), py = y - ldf(c, 1), pz = z - ldf(c, 2);
        // Scaled so that w = 1 / ln' is R / ln (the FDK weight's root) and fu = lu' w, fv = lv' w
        // are detector cells: ln' = ln / R, lu' = (p - S).U |C - S| / (pitchU R), likewise lv'.
        const r = ldf(c, 13);
        const sn: f32 = 1.0 / r, su: f32 = ldf(c, 12) / (pitchU * r), sv: f32 = ldf(c, 12) / (pitchV * r);
        const nx = ldf(c, 3) * sn, nyv = ldf(c, 4) * sn, nz = ldf(c, 5) * sn;
        const ux = ldf(c, 6) * su, uy = ldf(c, 7) * su, uz = ldf(c, 8) * su;
        const vx = ldf(c, 9) * sv, vy = ldf(c, 10) * sv, vz = ldf(c, 11) * sv;
        const ln0 = px * nx + py * nyv + pz * nz, dln = dx * nx;
        const lu0 = px * ux + py * uy + pz * uz, dlu = dx * ux;
        const lv0 = px * vx + py * vy + pz * vz, dlv = dx * vx;
        // Voxels whose ray misses the detector read only zero padding: keep the columns where
        // the padded coordinate lies in (0, n + 1), i.e. (since ln > 0) where the linear forms
        // lu + (shift - 1.5) ln > 0 and lu + (shift - 1.5 - nCh - 1) ln < 0 (likewise for v).
        const cu = shiftUs - 1.5, cv = shiftVs - 1.5;
        const au = lu0 + cu * ln0, bu = dlu + cu * dln;
        const bou = lu0 + (cu - <f32>(nCh + 1)) * ln0, bbu = dlu + (cu - <f32>(nCh + 1)) * dln;
        const av = lv0 + cv * ln0, bv = dlv + cv * dln;
        const bov = lv0 + (cv - <f32>(nRows + 1)) * ln0, bbv = dlv + (cv - <f32>(nRows + 1)) * dln;
        const first = Mathf.max(Mathf.max(Mathf.max(0, lowerOf(au, bu)), lowerOf(-bou, -bbu)), Mathf.max(lowerOf(av, bv), lowerOf(-bov, -bbv)));
        const last = Mathf.min(Mathf.min(Mathf.min(<f32>(nxs - 1), upperOf(au, bu)), upperOf(-bou, -bbu)), Mathf.min(upperOf(av, bv), upperOf(-bov, -bbv)));
        if (first > last) continue;
        const i0 = <i32>Mathf.max(0, Mathf.floor(first) - 1) & ~3;
        const i1 = min(nxs, (<i32>Mathf.min(<f32>nxs, Mathf.ceil(last) + 2) + 3) & ~3);
        const f0 = <f32>i0;
        let ln = f32x4.add(f32x4.splat(ln0 + f0 * dln), f32x4.mul(lane, f32x4.splat(dln)));
        let lu = f32x4.add(f32x4.splat(lu0 + f0 * dlu), f32x4.mul(lane, f32x4.splat(dlu)));
        let lv = f32x4.add(f32x4.splat(lv0 + f0 * dlv), f32x4.mul(lane, f32x4.splat(dlv)));
        const lnStep = f32x4.splat(4 * dln);
        const luStep = f32x4.splat(4 * dlu);
        const lvStep = f32x4.splat(4 * dlv);
        const block = filt + <usize>(v - view0) * blockBytes;
        const base = block - ((<usize>(MAGIC_BITS + 2) * <usize>(stride + 1)) << 2);
        for (let i = i0; i < i1; i += 4) {
          const w = f32x4.div(f32x4.splat(1), ln);
          const fu = clampTo(f32x4.add(f32x4.mul(lu, w), shiftU), lowC, topU);
          const fv = clampTo(f32x4.add(f32x4.mul(lv, w), shiftV), lowC, topV);
          // round(fu) = lower cell + 2 (cell.ts, with the 1.5 already added).
          const ru = f32x4.add(fu, magic), rvv = f32x4.add(fv, magic);
          // Byte offset of cell (kv - 2, ku - 2) from `block`, with the MAGIC bits and the -2
          // folded into `base` (32-bit address arithmetic wraps).
          const off = i32x4.shl(i32x4.add(i32x4.mul(rvv, strideV), ru), 2);
          const fracU = f32x4.sub(f32x4.add(fu, half), f32x4.sub(ru, magic));
          const fracV = f32x4.sub(f32x4.add(fv, half), f32x4.sub(rvv, magic));
          const val = bilinear(base, off, rowBytes, fracU, fracV);
          const p = dst + (<usize>i << 2);
          v128.store(p, f32x4.add(v128.load(p), f32x4.mul(val, f32x4.mul(w, w))));
          ln = f32x4.add(ln, lnStep);
          lu = f32x4.add(lu, luStep);
          lv = f32x4.add(lv, lvStep);
        }
      }
    }
  }
}

/** Lower end of the columns i where a + b i > 0 (a linear form in i); +inf when none. */
@inline function lowerOf(a: f32, b: f32): f32 {
  if (b > 0) return -a / b;
  if (b < 0 || a > 0) return -Infinity;
  return Infinity;
}

/** Upper end of the columns i where a + b i > 0; -inf when none. */
@inline function upperOf(a: f32, b: f32): f32 {
  if (b < 0) return -a / b;
  if (b > 0 || a > 0) return Infinity;
  return -Infinity;
}

/**
 * Bilinear samples of a row-major 2D array at four byte offsets `off` (cell (lo, lo) of each
 * lane), with fractions fa along the fast axis and fb along rows `rowBytes` apart.
 */
@inline export function bilinear(base: usize, off: v128, rowBytes: usize, fa: v128, fb: v128): v128 {
  const zero = f32x4.splat(0);
  const p0 = base + <usize>i32x4.extract_lane(off, 0);
  const p1 = base + <usize>i32x4.extract_lane(off, 1);
  const p2 = base + <usize>i32x4.extract_lane(off, 2);
  const p3 = base + <usize>i32x4.extract_lane(off, 3);
  let r01 = v128.load64_lane(p0, zero, 0);
  r01 = v128.load64_lane(p1, r01, 1);
  let r23 = v128.load64_lane(p2, zero, 0);
  r23 = v128.load64_lane(p3, r23, 1);
  let s01 = v128.load64_lane(p0 + rowBytes, zero, 0);
  s01 = v128.load64_lane(p1 + rowBytes, s01, 1);
  let s23 = v128.load64_lane(p2 + rowBytes, zero, 0);
  s23 = v128.load64_lane(p3 + rowBytes, s23, 1);
  const a0 = v128.shuffle<f32>(r01, r23, 0, 2, 4, 6);
  const b0 = v128.shuffle<f32>(r01, r23, 1, 3, 5, 7);
  const a1 = v128.shuffle<f32>(s01, s23, 0, 2, 4, 6);
  const b1 = v128.shuffle<f32>(s01, s23, 1, 3, 5, 7);
  const lo = f32x4.add(a0, f32x4.mul(fa, f32x4.sub(b0, a0)));
  const hi = f32x4.add(a1, f32x4.mul(fa, f32x4.sub(b1, a1)));
  return f32x4.add(lo, f32x4.mul(fb, f32x4.sub(hi, lo)));
}
