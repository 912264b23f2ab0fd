// Detector extension before filtering: each measured row is copied into a wider row and the
// channels beyond both edges are filled with a tail that falls smoothly to zero, so that the
// ramp filter no longer sees a jump at the detector edge (the cause of the bright rim of
// truncated FBP). The host (web/core/truncation/extension-plan.ts) fits the tails; this kernel
// only evaluates them. Published forms:
//   EDGE    constant continuation of the edge value over half the tail, then a cos^2 roll-off
//           (REFERENCES.md [taper-extrapolation]);
//   MIRROR  symmetric mirroring of the measured row about the edge, weighted by a cos^2 roll-off
//           (B. Ohnesorge et al., Med. Phys. 27(1):39-46, 2000);
//   WATER   projection of a water cylinder fitted to the edge value and slope,
//           p = 2 mu sqrt(R^2 - (d + delta / a)^2) (J. Hsieh et al., Med. Phys. 31(9):2385-2391,
//           2004);
//   COSINE  cos^2 taper of the edge value, p = p_e cos^2(pi delta / (2 L)) (REFERENCES.md [taper-extrapolation]).
// delta is the outward distance from the edge channel in the ray coordinate s (mm), read from
// `coord` (s of every extended channel), so fan and parallel beams are treated alike.
import { ldf, stf } from './memory';

export const EXTEND_ZERO: i32 = 0;
export const EXTEND_EDGE: i32 = 1;
export const EXTEND_MIRROR: i32 = 2;
export const EXTEND_WATER: i32 = 3;
export const EXTEND_COSINE: i32 = 4;

/**
 * Floats per view in the parameter table: left side [p0, p1, p2, p3], then right side.
 * EDGE [p_e, L, plateau, -]; MIRROR [-, L, -, -]; WATER [2 mu, R, d, 1/a]; COSINE [p_e, L, -, -].
 */
export const EXTEND_PARAMS: i32 = 8;

const HALF_PI: f32 = 1.5707963267948966;

/**
 * cos^2(pi x / 2) for x in [0, 1], four lanes: Taylor series of cos(y), y = pi x / 2, to the
 * y^12 term (remainder below y^14 / 14! = 6.4e-9 on [0, pi/2]).
 */
@inline function cos2Taper(x: v128): v128 {
  const y = f32x4.mul(x, f32x4.splat(HALF_PI));
  const y2 = f32x4.mul(y, y);
  let c = f32x4.splat(<f32>(1.0 / 479001600.0));
  c = f32x4.add(f32x4.mul(c, y2), f32x4.splat(<f32>(-1.0 / 3628800.0)));
  c = f32x4.add(f32x4.mul(c, y2), f32x4.splat(<f32>(1.0 / 40320.0)));
  c = f32x4.add(f32x4.mul(c, y2), f32x4.splat(<f32>(-1.0 / 720.0)));
  c = f32x4.add(f32x4.mul(c, y2), f32x4.splat(<f32>(1.0 / 24.0)));
  c = f32x4.add(f32x4.mul(c, y2), f32x4.splat(-0.5));
  c = f32x4.add(f32x4.mul(c, y2), f32x4.splat(1.0));
  return f32x4.mul(c, c);
}

@inline function clamp01(x: v128): v128 {
  return f32x4.min(f32x4.max(x, f32x4.splat(0)), f32x4.splat(1));
}

/** Measured value mirrored about the edge for extended channels j..j+3: row[clamp(base - j)]. */
@inline function mirrored(row: usize, base: i32, j: i32, nCh: i32): v128 {
  let r = f32x4.splat(0);
  r = f32x4.replace_lane(r, 0, ldf(row, min(nCh - 1, max(0, base - j))));
  r = f32x4.replace_lane(r, 1, ldf(row, min(nCh - 1, max(0, base - j - 1))));
  r = f32x4.replace_lane(r, 2, ldf(row, min(nCh - 1, max(0, base - j - 2))));
  r = f32x4.replace_lane(r, 3, ldf(row, min(nCh - 1, max(0, base - j - 3))));
  return r;
}

/**
 * Fills extended channels [j0, j1) of one output row. `edgeS` is the s of the edge channel,
 * `outward` +1 (right) or -1 (left); `p` points at this side's four parameters; the measured
 * row (nCh channels) feeds MIRROR with measured index base - j.
 */
function fillTail(
  out: usize, j0: i32, j1: i32, coord: usize, edgeS: f32, outward: f32, method: i32, p: usize,
  row: usize, nCh: i32, base: i32,
): void {
  const p0 = f32x4.splat(ldf(p, 0)), p1 = ldf(p, 1), p2 = ldf(p, 2), p3 = ldf(p, 3);
  const e = f32x4.splat(edgeS), o = f32x4.splat(outward);
  const invL = f32x4.splat(p1 > 0 ? <f32>1.0 / p1 : 0);
  const plateau = f32x4.splat(p2);
  const invRoll = f32x4.splat(p1 > p2 ? <f32>1.0 / (p1 - p2) : 0);
  const zero = f32x4.splat(0);
  for (let j = j0; j < j1; j += 4) {
    const delta = f32x4.max(f32x4.mul(f32x4.sub(v128.load(coord + (<usize>j << 2)), e), o), zero);
    let val = zero;
    if (method == EXTEND_COSINE) {
      val = p1 > 0 ? f32x4.mul(p0, cos2Taper(clamp01(f32x4.mul(delta, invL)))) : zero;
    } else if (method == EXTEND_EDGE) {
      val = p1 > 0 ? f32x4.mul(p0, cos2Taper(clamp01(f32x4.mul(f32x4.sub(delta, plateau), invRoll)))) : zero;
    } else if (method == EXTEND_MIRROR) {
      val = p1 > 0 ? f32x4.mul(mirrored(row, base, j, nCh), cos2Taper(clamp01(f32x4.mul(delta, invL)))) : zero;
    } else if (method == EXTEND_WATER) {
      // p0 = 2 mu, p1 = R, p2 = d, p3 = 1/a
      const q = f32x4.add(f32x4.splat(p2), f32x4.mul(delta, f32x4.splat(p3)));
      const rr = f32x4.sub(f32x4.splat(p1 * p1), f32x4.mul(q, q));
      val = f32x4.mul(p0, f32x4.sqrt(f32x4.max(rr, zero)));
    }
    const n = j1 - j;
    if (n >= 4) {
      v128.store(out + (<usize>j << 2), val);
    } else {
      stf(out, j, f32x4.extract_lane(val, 0));
      if (n > 1) stf(out, j + 1, f32x4.extract_lane(val, 1));
      if (n > 2) stf(out, j + 2, f32x4.extract_lane(val, 2));
    }
  }
}

/**
 * Extends views [view0, view1) of a sinogram (nCh channels per view) into `out`, whose rows
 * have left + nCh + right channels: the left tail, the measured channels, the right tail.
 * `coord` holds the s coordinate (mm) of every extended channel (left + nCh + right floats, plus
 * 3 readable spare floats); `params` EXTEND_PARAMS floats per view.
 */
export function extendViews(
  sino: usize, nCh: i32, view0: i32, view1: i32, left: i32, right: i32, method: i32,
  params: usize, coord: usize, out: usize,
): void {
  const nExt = left + nCh + right;
  const sLeft = ldf(coord, left), sRight = ldf(coord, left + nCh - 1);
  for (let v = view0; v < view1; v++) {
    const row = sino + (<usize>v * <usize>nCh << 2);
    const dst = out + (<usize>v * <usize>nExt << 2);
    const p = params + (<usize>(v * EXTEND_PARAMS) << 2);
    memory.copy(dst + (<usize>left << 2), row, <usize>nCh << 2);
    // Left tail: extended channel j < left mirrors measured channel left - j.
    fillTail(dst, 0, left, coord, sLeft, -1, method, p, row, nCh, left);
    // Right tail: extended channel j mirrors measured channel (nCh - 1) - (j - (left + nCh - 1)).
    fillTail(dst, left + nCh, nExt, coord, sRight, 1, method, p + 16, row, nCh, 2 * nCh - 2 + left);
  }
}
