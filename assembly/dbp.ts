// Differentiated backprojection (DBP) at a list of points, each with its own chord direction e
// (Noo, Clackdoyle & Pack 2004, Phys Med Biol 49:3903; web/core/dbp/derivative.ts has the
// formula and prepares the weighted ray derivatives):
//   parallel:   sum_v  d(v, u) sgn(U.e),                    u = (p - C).U
//   fan flat:   sum_v  d(v, u) sgn((p - S) x e) / |p - S|,  u = |C - S| (p - S).U / (p - S).n
//   fan curved: as flat with u = |C - S| atan((p - S).U / (p - S).n)
// Points are given as four planes (x, y, ex, ey) of `stride` floats each. Derivative rows are
// padded like filterViews output (cell 0 and the cells after nCh are zero), so samples off the
// detector read zero.
import { KIND_PARALLEL, KIND_FAN_FLAT, VIEW_STRIDE } from './abi';
import { atan4, sample } from './backproject';
import { ldf, MAGIC, MAGIC_BITS } from './memory';

/** +1 or -1 per lane by the sign bit of v (zero counts as +1). */
@inline function signOf(v: v128, one: v128, signBit: v128): v128 {
  return v128.or(v128.and(v, signBit), one);
}

/** Writes the DBP of points [p0, p1) (multiples of 4) into out[p]. */
export function dbpPoints(
  points: usize, stride: i32, p0: i32, p1: i32, out: usize,
  views: usize, kind: i32, nViews: i32,
  deriv: usize, rowStride: i32, nCh: i32, u0: f32, pitch: f32,
): void {
  const zero = f32x4.splat(0);
  const one = f32x4.splat(1);
  const signBit = i32x4.splat(0x80000000);
  const top = f32x4.splat(<f32>(nCh + 1));
  const magic = f32x4.splat(MAGIC);
  const magicBits = i32x4.splat(MAGIC_BITS);
  const invPitch: f32 = 1.0 / pitch;
  const shift = f32x4.splat(1.0 - u0 * invPitch); // +1: padded cell 0
  const plane = <usize>stride << 2;
  for (let p = p0; p < p1; p += 4) {
    const at = points + (<usize>p << 2);
    const x = v128.load(at), y = v128.load(at + plane);
    const ex = v128.load(at + 2 * plane), ey = v128.load(at + 3 * plane);
    let acc = zero;
    for (let v = 0; v < nViews; v++) {
      const b = views + (<usize>(v * VIEW_STRIDE) << 2);
      const ax = ldf(b, 0), ay = ldf(b, 1), cx = ldf(b, 3), cy = ldf(b, 4);
      let ux = ldf(b, 6), uy = ldf(b, 7);
      const ul = Mathf.sqrt(ux * ux + uy * uy);
      ux /= ul; uy /= ul;
      const row = deriv + (<usize>v * <usize>rowStride << 2);
      const uxv = f32x4.splat(ux), uyv = f32x4.splat(uy);
      if (kind == KIND_PARALLEL) {
        const u = f32x4.add(f32x4.mul(f32x4.sub(x, f32x4.splat(cx)), uxv), f32x4.mul(f32x4.sub(y, f32x4.splat(cy)), uyv));
        const f = f32x4.add(f32x4.mul(u, f32x4.splat(invPitch)), shift);
        const s = signOf(f32x4.add(f32x4.mul(uxv, ex), f32x4.mul(uyv, ey)), one, signBit);
        acc = f32x4.add(acc, f32x4.mul(sample(row, f, zero, top, magic, magicBits), s));
        continue;
      }
      let nx = cx - ax, ny = cy - ay;
      const dist = Mathf.sqrt(nx * nx + ny * ny);
      nx /= dist; ny /= dist;
      const rx = f32x4.sub(x, f32x4.splat(ax)), ry = f32x4.sub(y, f32x4.splat(ay));
      const ln = f32x4.add(f32x4.mul(rx, f32x4.splat(nx)), f32x4.mul(ry, f32x4.splat(ny)));
      const lu = f32x4.add(f32x4.mul(rx, uxv), f32x4.mul(ry, uyv));
      const ratio = f32x4.div(lu, ln);
      const scale = f32x4.splat(dist * invPitch);
      const f = f32x4.add(f32x4.mul(kind == KIND_FAN_FLAT ? ratio : atan4(ratio), scale), shift);
      const s = signOf(f32x4.sub(f32x4.mul(rx, ey), f32x4.mul(ry, ex)), one, signBit);
      const w = f32x4.div(s, f32x4.sqrt(f32x4.add(f32x4.mul(rx, rx), f32x4.mul(ry, ry))));
      acc = f32x4.add(acc, f32x4.mul(sample(row, f, zero, top, magic, magicBits), w));
    }
    v128.store(out + (<usize>p << 2), acc);
  }
}
