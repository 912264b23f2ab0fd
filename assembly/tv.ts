// Total variation of 2D images and its gradient, for the TV steepest-descent steps of ASD-POCS
// (E. Y. Sidky, X. Pan, "Image reconstruction in circular cone-beam computed tomography by
// constrained, total-variation minimization", Phys. Med. Biol. 53(17):4777-4807, 2008, eq. for
// the smoothed TV gradient) and its reweighted form (E. J. Candes, M. B. Wakin, S. P. Boyd,
// "Enhancing sparsity by reweighted l1 minimization", J. Fourier Anal. Appl. 14:877-905, 2008).
//
// With backward differences dx_p = f_p - f_(p - x), dy_p = f_p - f_(p - y) (0 on the first
// column / row) and m_p = sqrt(dx_p^2 + dy_p^2 + delta^2), the weighted TV is sum_p w_p m_p and
//   dTV/df_q = g_q (dx_q + dy_q) - g_(q + x) dx_(q + x) - g_(q + y) dy_(q + y),   g_p = w_p / m_p
// (the last two terms vanish on the last column / row). Images are nx x ny, x fastest; every
// kernel handles rows [j0, j1) so workers can split an image by rows, reading one row beyond.
import { ldf, stf } from './memory';

/**
 * Pass 1 of the TV gradient: g[p] = w[p] / sqrt(dx^2 + dy^2 + delta2) for rows [j0, j1).
 * Writes each row's (unweighted, unsmoothed) TV, sum sqrt(dx^2 + dy^2), to rowSums[j] (f64).
 */
export function tvScale(f: usize, w: usize, g: usize, nx: i32, ny: i32, j0: i32, j1: i32, delta2: f32, rowSums: usize): void {
  const d2 = f32x4.splat(delta2);
  for (let j = j0; j < j1; j++) {
    const row = j * nx;
    const up = j > 0 ? row - nx : row;
    let rowTv: f32 = 0;
    // First column: no left neighbour.
    {
      const dy = ldf(f, row) - ldf(f, up);
      stf(g, row, ldf(w, row) / Mathf.sqrt(dy * dy + delta2));
      rowTv += Mathf.abs(dy);
    }
    let acc = f32x4.splat(0);
    let i = 1;
    for (; i + 4 <= nx; i += 4) {
      const o = <usize>(row + i) << 2;
      const fv = v128.load(f + o);
      const dx = f32x4.sub(fv, v128.load(f + o - 4));
      const dy = f32x4.sub(fv, v128.load(f + (<usize>(up + i) << 2)));
      const s = f32x4.add(f32x4.mul(dx, dx), f32x4.mul(dy, dy));
      v128.store(g + o, f32x4.div(v128.load(w + o), f32x4.sqrt(f32x4.add(s, d2))));
      acc = f32x4.add(acc, f32x4.sqrt(s));
    }
    rowTv += f32x4.extract_lane(acc, 0) + f32x4.extract_lane(acc, 1) + f32x4.extract_lane(acc, 2) + f32x4.extract_lane(acc, 3);
    for (; i < nx; i++) {
      const fv = ldf(f, row + i);
      const dx = fv - ldf(f, row + i - 1);
      const dy = fv - ldf(f, up + i);
      const s = dx * dx + dy * dy;
      stf(g, row + i, ldf(w, row + i) / Mathf.sqrt(s + delta2));
      rowTv += Mathf.sqrt(s);
    }
    store<f64>(rowSums + (<usize>j << 3), <f64>rowTv);
  }
}

/** The gradient at one pixel (scalar path for the first and last columns and the tails). */
@inline function gradientAt(f: usize, g: usize, nx: i32, row: i32, up: i32, down: i32, i: i32): f32 {
  const fv = ldf(f, row + i);
  const dx: f32 = i > 0 ? fv - ldf(f, row + i - 1) : 0;
  const dy = fv - ldf(f, up + i);
  let r = ldf(g, row + i) * (dx + dy);
  if (i + 1 < nx) r -= ldf(g, row + i + 1) * (ldf(f, row + i + 1) - fv);
  r -= ldf(g, down + i) * (ldf(f, down + i) - fv);
  return r;
}

/**
 * Pass 2: grad[p] = support[p] * dTV/df_p for rows [j0, j1), from g (tvScale, which must cover
 * rows [j0, j1 + 1)). Writes each row's sum of grad^2 to rowSums[j] (f64).
 */
export function tvGradient(f: usize, g: usize, support: usize, grad: usize, nx: i32, ny: i32, j0: i32, j1: i32, rowSums: usize): void {
  for (let j = j0; j < j1; j++) {
    const row = j * nx;
    const up = j > 0 ? row - nx : row;
    // On the last row the "down" neighbour is the row itself, so its difference is 0.
    const down = j + 1 < ny ? row + nx : row;
    let s: f32 = 0;
    {
      const r = gradientAt(f, g, nx, row, up, down, 0) * ldf(support, row);
      stf(grad, row, r);
      s += r * r;
    }
    let acc = f32x4.splat(0);
    let i = 1;
    for (; i + 4 < nx; i += 4) {
      const o = <usize>(row + i) << 2;
      const od = <usize>(down + i) << 2;
      const fv = v128.load(f + o);
      const dx = f32x4.sub(fv, v128.load(f + o - 4));
      const dy = f32x4.sub(fv, v128.load(f + (<usize>(up + i) << 2)));
      const dxRight = f32x4.sub(v128.load(f + o + 4), fv);
      const dyDown = f32x4.sub(v128.load(f + od), fv);
      let r = f32x4.mul(v128.load(g + o), f32x4.add(dx, dy));
      r = f32x4.sub(r, f32x4.mul(v128.load(g + o + 4), dxRight));
      r = f32x4.sub(r, f32x4.mul(v128.load(g + od), dyDown));
      r = f32x4.mul(r, v128.load(support + o));
      v128.store(grad + o, r);
      acc = f32x4.add(acc, f32x4.mul(r, r));
    }
    s += f32x4.extract_lane(acc, 0) + f32x4.extract_lane(acc, 1) + f32x4.extract_lane(acc, 2) + f32x4.extract_lane(acc, 3);
    for (; i < nx; i++) {
      const r = gradientAt(f, g, nx, row, up, down, i) * ldf(support, row + i);
      stf(grad, row + i, r);
      s += r * r;
    }
    store<f64>(rowSums + (<usize>j << 3), <f64>s);
  }
}

/**
 * Reweighted-TV weights for rows [j0, j1): w[p] = 1 / (sqrt(dx^2 + dy^2) + eps)
 * (Candes, Wakin & Boyd 2008, applied to the gradient magnitude).
 */
export function tvWeights(f: usize, w: usize, nx: i32, ny: i32, j0: i32, j1: i32, eps: f32): void {
  const ev = f32x4.splat(eps);
  const one = f32x4.splat(1);
  for (let j = j0; j < j1; j++) {
    const row = j * nx;
    const up = j > 0 ? row - nx : row;
    {
      const dy = ldf(f, row) - ldf(f, up);
      stf(w, row, 1 / (Mathf.abs(dy) + eps));
    }
    let i = 1;
    for (; i + 4 <= nx; i += 4) {
      const o = <usize>(row + i) << 2;
      const fv = v128.load(f + o);
      const dx = f32x4.sub(fv, v128.load(f + o - 4));
      const dy = f32x4.sub(fv, v128.load(f + (<usize>(up + i) << 2)));
      const m = f32x4.sqrt(f32x4.add(f32x4.mul(dx, dx), f32x4.mul(dy, dy)));
      v128.store(w + o, f32x4.div(one, f32x4.add(m, ev)));
    }
    for (; i < nx; i++) {
      const fv = ldf(f, row + i);
      const dx = fv - ldf(f, row + i - 1);
      const dy = fv - ldf(f, up + i);
      stf(w, row + i, 1 / (Mathf.sqrt(dx * dx + dy * dy) + eps));
    }
  }
}
