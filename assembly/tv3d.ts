// Total variation of volumes (6-neighbour backward differences) and its gradient, for the TV
// steepest-descent steps of ASD-POCS on volumes (E. Y. Sidky, X. Pan, "Image reconstruction in
// circular cone-beam computed tomography by constrained, total-variation minimization", Phys.
// Med. Biol. 53(17):4777-4807, 2008, which is posed in 3D) and its reweighted form (E. J.
// Candes, M. B. Wakin, S. P. Boyd, J. Fourier Anal. Appl. 14:877-905, 2008).
//
// With backward differences dx_p = f_p - f_(p - x), dy_p = f_p - f_(p - y), dz_p = f_p - f_(p - z)
// (0 on the first column / row / slice) and m_p = sqrt(dx^2 + dy^2 + dz^2 + delta^2), the
// weighted TV is sum_p w_p m_p and, with g_p = w_p / m_p,
//   dTV/df_q = g_q (dx_q + dy_q + dz_q) - g_(q+x) dx_(q+x) - g_(q+y) dy_(q+y) - g_(q+z) dz_(q+z)
// (a term vanishes on the last column / row / slice). Volumes are nx x ny x nz, x fastest. The
// kernels work on lines l = k ny + j (rows of all slices) in [l0, l1), so workers split a volume
// into bands of lines as they split an image into bands of rows; a line reads the line before
// it and the slice before it (pass 1), or the line and the slice after it (pass 2).
import { ldf, stf } from './memory';

/**
 * Pass 1: g[p] = w[p] / sqrt(dx^2 + dy^2 + dz^2 + delta2) for lines [l0, l1). Writes each line's
 * (unweighted, unsmoothed) TV, sum sqrt(dx^2 + dy^2 + dz^2), to lineSums[l] (f64).
 */
export function tv3Scale(f: usize, w: usize, g: usize, nx: i32, ny: i32, nz: i32, l0: i32, l1: i32, delta2: f32, lineSums: usize): void {
  const d2 = f32x4.splat(delta2);
  const nxy = nx * ny;
  for (let l = l0; l < l1; l++) {
    const row = l * nx;
    const j = l % ny;
    const up = j > 0 ? row - nx : row;
    const back = l >= ny ? row - nxy : row;
    let lineTv: f32 = 0;
    {
      const fv = ldf(f, row);
      const dy = fv - ldf(f, up), dz = fv - ldf(f, back);
      const s = dy * dy + dz * dz;
      stf(g, row, ldf(w, row) / Mathf.sqrt(s + delta2));
      lineTv += Mathf.sqrt(s);
    }
    let acc = f32x4.splat(0);
    let i = 1;
    for (; i + 4 <= nx; i += 4) {
      const o = <usize>(row + i) << 2;
      const fv = v128.load(f + o);
      const dx = f32x4.sub(fv, v128.load(f + o - 4));
      const dy = f32x4.sub(fv, v128.load(f + (<usize>(up + i) << 2)));
      const dz = f32x4.sub(fv, v128.load(f + (<usize>(back + i) << 2)));
      const s = f32x4.add(f32x4.add(f32x4.mul(dx, dx), f32x4.mul(dy, dy)), f32x4.mul(dz, dz));
      v128.store(g + o, f32x4.div(v128.load(w + o), f32x4.sqrt(f32x4.add(s, d2))));
      acc = f32x4.add(acc, f32x4.sqrt(s));
    }
    lineTv += f32x4.extract_lane(acc, 0) + f32x4.extract_lane(acc, 1) + f32x4.extract_lane(acc, 2) + f32x4.extract_lane(acc, 3);
    for (; i < nx; i++) {
      const fv = ldf(f, row + i);
      const dx = fv - ldf(f, row + i - 1), dy = fv - ldf(f, up + i), dz = fv - ldf(f, back + i);
      const s = dx * dx + dy * dy + dz * dz;
      stf(g, row + i, ldf(w, row + i) / Mathf.sqrt(s + delta2));
      lineTv += Mathf.sqrt(s);
    }
    store<f64>(lineSums + (<usize>l << 3), <f64>lineTv);
  }
}

/** The gradient at one voxel (scalar path for the first and last columns and the tails). */
@inline function gradientAt(f: usize, g: usize, nx: i32, row: i32, up: i32, down: i32, back: i32, front: i32, i: i32): f32 {
  const fv = ldf(f, row + i);
  const dx: f32 = i > 0 ? fv - ldf(f, row + i - 1) : 0;
  let r = ldf(g, row + i) * (dx + (fv - ldf(f, up + i)) + (fv - ldf(f, back + i)));
  if (i + 1 < nx) r -= ldf(g, row + i + 1) * (ldf(f, row + i + 1) - fv);
  r -= ldf(g, down + i) * (ldf(f, down + i) - fv);
  r -= ldf(g, front + i) * (ldf(f, front + i) - fv);
  return r;
}

/**
 * Pass 2: grad[p] = support[p] * dTV/df_p for lines [l0, l1), from g (tv3Scale, which must cover
 * lines [l0, l1 + ny)). Writes each line's sum of grad^2 to lineSums[l] (f64).
 */
export function tv3Gradient(f: usize, g: usize, support: usize, grad: usize, nx: i32, ny: i32, nz: i32, l0: i32, l1: i32, lineSums: usize): void {
  const nxy = nx * ny;
  for (let l = l0; l < l1; l++) {
    const row = l * nx;
    const j = l % ny, k = l / ny;
    const up = j > 0 ? row - nx : row;
    // On the last row (slice) the neighbour after it is the line itself, so its difference is 0.
    const down = j + 1 < ny ? row + nx : row;
    const back = k > 0 ? row - nxy : row;
    const front = k + 1 < nz ? row + nxy : row;
    let s: f32 = 0;
    {
      const r = gradientAt(f, g, nx, row, up, down, back, front, 0) * ldf(support, row);
      stf(grad, row, r);
      s += r * r;
    }
    let acc = f32x4.splat(0);
    let i = 1;
    for (; i + 4 < nx; i += 4) {
      const o = <usize>(row + i) << 2;
      const od = <usize>(down + i) << 2, ofr = <usize>(front + i) << 2;
      const fv = v128.load(f + o);
      const dx = f32x4.sub(fv, v128.load(f + o - 4));
      const dy = f32x4.sub(fv, v128.load(f + (<usize>(up + i) << 2)));
      const dz = f32x4.sub(fv, v128.load(f + (<usize>(back + i) << 2)));
      let r = f32x4.mul(v128.load(g + o), f32x4.add(f32x4.add(dx, dy), dz));
      r = f32x4.sub(r, f32x4.mul(v128.load(g + o + 4), f32x4.sub(v128.load(f + o + 4), fv)));
      r = f32x4.sub(r, f32x4.mul(v128.load(g + od), f32x4.sub(v128.load(f + od), fv)));
      r = f32x4.sub(r, f32x4.mul(v128.load(g + ofr), f32x4.sub(v128.load(f + ofr), fv)));
      r = f32x4.mul(r, v128.load(support + o));
      v128.store(grad + o, r);
      acc = f32x4.add(acc, f32x4.mul(r, r));
    }
    s += f32x4.extract_lane(acc, 0) + f32x4.extract_lane(acc, 1) + f32x4.extract_lane(acc, 2) + f32x4.extract_lane(acc, 3);
    for (; i < nx; i++) {
      const r = gradientAt(f, g, nx, row, up, down, back, front, i) * ldf(support, row + i);
      stf(grad, row + i, r);
      s += r * r;
    }
    store<f64>(lineSums + (<usize>l << 3), <f64>s);
  }
}

/**
 * Reweighted-TV weights for lines [l0, l1): w[p] = 1 / (sqrt(dx^2 + dy^2 + dz^2) + eps)
 * (Candes, Wakin & Boyd 2008, applied to the gradient magnitude).
 */
export function tv3Weights(f: usize, w: usize, nx: i32, ny: i32, nz: i32, l0: i32, l1: i32, eps: f32): void {
  const ev = f32x4.splat(eps);
  const one = f32x4.splat(1);
  const nxy = nx * ny;
  for (let l = l0; l < l1; l++) {
    const row = l * nx;
    const j = l % ny;
    const up = j > 0 ? row - nx : row;
    const back = l >= ny ? row - nxy : row;
    {
      const fv = ldf(f, row);
      const dy = fv - ldf(f, up), dz = fv - ldf(f, back);
      stf(w, row, 1 / (Mathf.sqrt(dy * dy + dz * dz) + eps));
    }
    let i = 1;
    for (; i + 4 <= nx; i += 4) {
      const o = <usize>(row + i) << 2;
      const fv = v128.load(f + o);
      const dx = f32x4.sub(fv, v128.load(f + o - 4));
      const dy = f32x4.sub(fv, v128.load(f + (<usize>(up + i) << 2)));
      const dz = f32x4.sub(fv, v128.load(f + (<usize>(back + i) << 2)));
      const m = f32x4.sqrt(f32x4.add(f32x4.add(f32x4.mul(dx, dx), f32x4.mul(dy, dy)), f32x4.mul(dz, dz)));
      v128.store(w + o, f32x4.div(one, f32x4.add(m, ev)));
    }
    for (; i < nx; i++) {
      const fv = ldf(f, row + i);
      const dx = fv - ldf(f, row + i - 1), dy = fv - ldf(f, up + i), dz = fv - ldf(f, back + i);
      stf(w, row + i, 1 / (Mathf.sqrt(dx * dx + dy * dy + dz * dz) + eps));
    }
  }
}
