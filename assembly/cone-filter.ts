// FDK pre-weighting and row-wise ramp filtering of cone-beam projections.
//
// Feldkamp, Davis & Kress (J. Opt. Soc. Am. A 1(6):612-619, 1984; REFERENCES.md [fdk-1984]) weight each
// sample by D / sqrt(D^2 + u^2 + v^2) and ramp-filter every detector row along u. The host's
// per-view weights (angular step x redundancy x cos(gamma), the in-plane part, as fan-beam FBP
// uses them) arrive in `viewWeights`; this kernel multiplies in the out-of-plane part
//   cos(kappa) = sqrt(D^2 + u^2) / sqrt(D^2 + u^2 + v^2),
// so the product is the FDK weight. D = |C - S| per view, u and v in mm on the detector.
// Rows of all views are then filtered like sinogram rows (fft.ts filterViews).
import { VIEW_STRIDE } from './abi';
import { filterViews } from './fft';
import { ldf } from './memory';

/**
 * Weights (in place) and filters views [view0, view1) of a chunk of projections that starts at
 * view chunk0: view v's rows are at proj + (v - chunk0) * nRows * nCh floats, channel fastest.
 * viewWeights holds nCh weights per view, indexed by the global view number.
 * Output: per view a block of nRows + 3 row slots of `stride` (>= nCh + 3) floats at
 * out + (v - chunk0) * (nRows + 3) * stride; row r goes to slot r + 1 in filterViews' padded
 * layout, and slots 0, nRows + 1 and nRows + 2 are zeroed (see cone-backproject.ts).
 */
export function coneFilterViews(
  proj: usize, nCh: i32, nRows: i32, chunk0: i32, view0: i32, view1: i32,
  views: usize, viewWeights: usize, u0: f32, pitchU: f32, v0: f32, pitchV: f32,
  H: usize, nPad: i32, twRe: usize, twIm: usize, bitrev: usize, re: usize, im: usize,
  out: usize, stride: i32,
): void {
  const blockBytes = <usize>(nRows + 3) * (<usize>stride << 2);
  for (let v = view0; v < view1; v++) {
    filterConeView(proj, nCh, nRows, chunk0, v, views, viewWeights, u0, pitchU, v0, pitchV,
      H, nPad, twRe, twIm, bitrev, re, im, out + <usize>(v - chunk0) * blockBytes, stride);
  }
}

/**
 * Weights and filters view v of the chunk (as coneFilterViews) into one padded block at
 * `block`: nRows + 3 row slots of `stride` floats.
 */
export function filterConeView(
  proj: usize, nCh: i32, nRows: i32, chunk0: i32, v: i32,
  views: usize, viewWeights: usize, u0: f32, pitchU: f32, v0: f32, pitchV: f32,
  H: usize, nPad: i32, twRe: usize, twIm: usize, bitrev: usize, re: usize, im: usize,
  block: usize, stride: i32,
): void {
  const rowBytes = <usize>stride << 2;
  const lane = f32x4(0, 1, 2, 3);
  const b = views + (<usize>(v * VIEW_STRIDE) << 2);
  const cx = ldf(b, 3) - ldf(b, 0), cy = ldf(b, 4) - ldf(b, 1), cz = ldf(b, 5) - ldf(b, 2);
  const d2 = f32x4.splat(cx * cx + cy * cy + cz * cz);
  const rows = proj + (<usize>(v - chunk0) * <usize>nRows * <usize>nCh << 2);
  const w = viewWeights + (<usize>v * <usize>nCh << 2);
  for (let r = 0; r < nRows; r++) {
    const vr = v0 + <f32>r * pitchV;
    const v2 = f32x4.splat(vr * vr);
    const row = rows + (<usize>r * <usize>nCh << 2);
    let k = 0;
    for (; k + 4 <= nCh; k += 4) {
      const u = f32x4.add(f32x4.splat(u0 + <f32>k * pitchU), f32x4.mul(lane, f32x4.splat(pitchU)));
      const inPlane = f32x4.add(d2, f32x4.mul(u, u));
      const cosKappa = f32x4.sqrt(f32x4.div(inPlane, f32x4.add(inPlane, v2)));
      const p = row + (<usize>k << 2);
      v128.store(p, f32x4.mul(f32x4.mul(v128.load(p), v128.load(w + (<usize>k << 2))), cosKappa));
    }
    for (; k < nCh; k++) {
      const u = u0 + <f32>k * pitchU;
      const inPlane = cx * cx + cy * cy + cz * cz + u * u;
      const p = row + (<usize>k << 2);
      store<f32>(p, load<f32>(p) * ldf(w, k) * Mathf.sqrt(inPlane / (inPlane + vr * vr)));
    }
  }
  memory.fill(block, 0, rowBytes);
  filterViews(rows, nCh, 0, nRows, 0, 0, H, nPad, twRe, twIm, bitrev, re, im, block + rowBytes, stride);
  memory.fill(block + <usize>(nRows + 1) * rowBytes, 0, rowBytes << 1);
}
