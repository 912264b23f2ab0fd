// Pixel-driven backprojection with linear interpolation on the detector, for FBP.
//
// For each pixel p and view v the detector coordinate of the ray through p is found from the
// view vectors (see abi.ts) and the filtered projection is sampled there:
//   parallel:   u = (p - C).U,                          weight 1
//   fan flat:   u = |C-S| (p-S).U / (p-S).n,            weight (R / (p-S).n)^2
//   fan curved: u = |C-S| atan((p-S).U / (p-S).n),      weight 1 / |p-S|^2
// with n the unit central ray (C - S)/|C - S| and R = -S.n the source-to-isocentre distance
// along it. The weights are the distance weights of fan-beam FBP for equispaced and
// equiangular detectors (Kak & Slaney, Principles of Computerized Tomographic Imaging, 1988,
// ch. 3.4, eqs. for U^-2 and L^-2).
//
// Filtered rows are laid out as filterViews writes them: row v starts at filt + v*stride
// floats, cell 0 and the cells after the nCh channels are zero, so indices are clamped
// instead of tested.
import { KIND_PARALLEL, KIND_FAN_FLAT, VIEW_STRIDE } from './abi';
import { clampIndex, floorOffsets, ldf, MAGIC, MAGIC_BITS } from './memory';

/**
 * Adds the backprojection of views [view0, view1) into image rows [row0, row1).
 * img has row stride imgStride (a multiple of 4, >= nx); columns beyond nx are scratch.
 */
export function backproject2d(
  img: usize, nx: i32, imgStride: i32, row0: i32, row1: i32,
  dx: f32, dy: f32, x0: f32, y0: f32,
  views: usize, kind: i32, view0: i32, view1: i32,
  filt: usize, stride: i32, nCh: i32, u0: f32, pitch: f32,
): void {
  const zero = f32x4.splat(0);
  const top = f32x4.splat(<f32>(nCh + 1));
  const magic = f32x4.splat(MAGIC);
  const magicBits = i32x4.splat(MAGIC_BITS);
  const lane = f32x4(0, 1, 2, 3);
  for (let v = view0; v < view1; v++) {
    const b = views + (<usize>(v * VIEW_STRIDE) << 2);
    const ax = ldf(b, 0), ay = ldf(b, 1);
    const cx = ldf(b, 3), cy = ldf(b, 4);
    let ux = ldf(b, 6), uy = ldf(b, 7);
    const ul = Mathf.sqrt(ux * ux + uy * uy);
    ux /= ul; uy /= ul;
    let nxv = cx - ax, nyv = cy - ay;
    const dist = Mathf.sqrt(nxv * nxv + nyv * nyv);
    nxv /= dist; nyv /= dist;
    const row = filt + (<usize>v * <usize>stride << 2);
    const invPitch: f32 = 1.0 / pitch;
    const shift: f32 = 1.0 - u0 * invPitch; // +1: padded cell 0
    for (let j = row0; j < row1; j++) {
      const y = y0 + <f32>j * dy;
      const dst = img + (<usize>j * <usize>imgStride << 2);
      if (kind == KIND_PARALLEL) {
        // fi = ((x - cx) ux + (y - cy) uy) / pitch + shift, linear in i
        const f0 = ((x0 - cx) * ux + (y - cy) * uy) * invPitch + shift;
        const fx = dx * ux * invPitch;
        const fStep = f32x4.splat(4 * fx);
        let f = f32x4.add(f32x4.splat(f0), f32x4.mul(lane, f32x4.splat(fx)));
        for (let i = 0; i < nx; i += 4) {
          const val = sample(row, f, zero, top, magic, magicBits);
          const p = dst + (<usize>i << 2);
          v128.store(p, f32x4.add(v128.load(p), val));
          f = f32x4.add(f, fStep);
        }
      } else {
        // Ln = (p - S).n, Lu = (p - S).U, both linear in i.
        const l0 = (x0 - ax) * nxv + (y - ay) * nyv;
        const m0 = (x0 - ax) * ux + (y - ay) * uy;
        let ln = f32x4.add(f32x4.splat(l0), f32x4.mul(lane, f32x4.splat(dx * nxv)));
        let lu = f32x4.add(f32x4.splat(m0), f32x4.mul(lane, f32x4.splat(dx * ux)));
        const lnStep = f32x4.splat(4 * dx * nxv);
        const luStep = f32x4.splat(4 * dx * ux);
        const sh = f32x4.splat(shift);
        if (kind == KIND_FAN_FLAT) {
          // With q = R / Ln: u/pitch = (dist / (pitch R)) Lu q and the weight is q^2, so Lu is
          // carried pre-scaled and one division per four pixels does both.
          const r = -(ax * nxv + ay * nyv);
          const rv = f32x4.splat(r);
          const luScale: f32 = (dist * invPitch) / r;
          let lus = f32x4.mul(lu, f32x4.splat(luScale));
          const lusStep = f32x4.mul(luStep, f32x4.splat(luScale));
          for (let i = 0; i < nx; i += 4) {
            const q = f32x4.div(rv, ln);
            const f = f32x4.add(f32x4.mul(lus, q), sh);
            const val = sample(row, f, zero, top, magic, magicBits);
            const p = dst + (<usize>i << 2);
            v128.store(p, f32x4.add(v128.load(p), f32x4.mul(val, f32x4.mul(q, q))));
            ln = f32x4.add(ln, lnStep);
            lus = f32x4.add(lus, lusStep);
          }
        } else {
          const scale = f32x4.splat(dist * invPitch);
          for (let i = 0; i < nx; i += 4) {
            const g = atan4(f32x4.div(lu, ln));
            const f = f32x4.add(f32x4.mul(g, scale), sh);
            const w = f32x4.div(f32x4.splat(1), f32x4.add(f32x4.mul(ln, ln), f32x4.mul(lu, lu)));
            const val = sample(row, f, zero, top, magic, magicBits);
            const p = dst + (<usize>i << 2);
            v128.store(p, f32x4.add(v128.load(p), f32x4.mul(val, w)));
            ln = f32x4.add(ln, lnStep);
            lu = f32x4.add(lu, luStep);
          }
        }
      }
    }
  }
}

/**
 * Linear interpolation of a padded filtered row at padded coordinates f (four lanes). The
 * integer part comes from floor + MAGIC (exact for integers below 2^22), not a conversion.
 */
@inline export function sample(row: usize, f: v128, zero: v128, top: v128, magic: v128, magicBits: v128): v128 {
  const t = clampIndex(f, zero, top);
  const fl = f32x4.floor(t);
  const off = floorOffsets(fl, magic, magicBits);
  const frac = f32x4.sub(t, fl);
  let ab = v128.load64_lane(row + <usize>i32x4.extract_lane(off, 0), zero, 0);
  ab = v128.load64_lane(row + <usize>i32x4.extract_lane(off, 1), ab, 1);
  let cd = v128.load64_lane(row + <usize>i32x4.extract_lane(off, 2), zero, 0);
  cd = v128.load64_lane(row + <usize>i32x4.extract_lane(off, 3), cd, 1);
  const a = v128.shuffle<f32>(ab, cd, 0, 2, 4, 6);
  const b = v128.shuffle<f32>(ab, cd, 1, 3, 5, 7);
  return f32x4.add(a, f32x4.mul(frac, f32x4.sub(b, a)));
}

/**
 * atan(z) for four lanes, |z| clamped to 1 (fan angles stay well below 45 degrees).
 * Odd polynomial of Abramowitz & Stegun, Handbook of Mathematical Functions, 4.4.49
 * (|error| <= 2e-8 on [-1, 1]; coefficients from memory, checked against Math.atan in tests).
 */
@inline export function atan4(z: v128): v128 {
  const one = f32x4.splat(1);
  const x = f32x4.pmin(one, f32x4.pmax(f32x4.neg(one), z));
  const x2 = f32x4.mul(x, x);
  let p = f32x4.splat(0.0028662257);
  p = f32x4.add(f32x4.mul(p, x2), f32x4.splat(-0.0161657367));
  p = f32x4.add(f32x4.mul(p, x2), f32x4.splat(0.0429096138));
  p = f32x4.add(f32x4.mul(p, x2), f32x4.splat(-0.0752896400));
  p = f32x4.add(f32x4.mul(p, x2), f32x4.splat(0.1065626393));
  p = f32x4.add(f32x4.mul(p, x2), f32x4.splat(-0.1420889944));
  p = f32x4.add(f32x4.mul(p, x2), f32x4.splat(0.1999355085));
  p = f32x4.add(f32x4.mul(p, x2), f32x4.splat(-0.3333314528));
  p = f32x4.add(f32x4.mul(p, x2), one);
  return f32x4.mul(p, x);
}

/** Scalar entry to atan4 (lane 0) so tests can check the polynomial against Math.atan. */
export function atanApprox(z: f32): f32 {
  return f32x4.extract_lane(atan4(f32x4.splat(z)), 0);
}
