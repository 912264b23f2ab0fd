// Detector rows of cone-beam views laid out as the voxel-driven backprojector reads them
// (cone-backproject.ts): per view nRows + 3 row slots of `stride` (>= nCh + 3) floats, row r in
// slot r + 1 and channel k in cell k + 1; slot 0, slots nRows + 1 and nRows + 2, cell 0 and the
// cells after nCh are zero. Used where unfiltered projections are backprojected voxel by voxel
// (the update step of OS-SART on volumes), so each view also takes the factor that makes the
// backprojector's weights match the line-integral projector's column sums (see Projector3d).
import { VIEW_STRIDE } from './abi';
import { ldf } from './memory';

/**
 * Pads views [view0, view1) of `proj` ([view][row][channel]) into consecutive blocks at `out`,
 * each view's rows times scale (D / R)^2, D = |C - S| and R = -S.n (n the unit central ray) of
 * that view in the view table.
 */
export function padConeRows(proj: usize, nCh: i32, nRows: i32, views: usize, view0: i32, view1: i32, scale: f32, out: usize, stride: i32): void {
  const rowBytes = <usize>stride << 2;
  const blockBytes = <usize>(nRows + 3) * rowBytes;
  for (let v = view0; v < view1; v++) {
    const b = views + (<usize>(v * VIEW_STRIDE) << 2);
    const sx = <f64>ldf(b, 0), sy = <f64>ldf(b, 1), sz = <f64>ldf(b, 2);
    const cx = <f64>ldf(b, 3) - sx, cy = <f64>ldf(b, 4) - sy, cz = <f64>ldf(b, 5) - sz;
    const d2 = cx * cx + cy * cy + cz * cz;
    // R = -S.n = -S.(C - S) / D, so (D / R)^2 = D^4 / (S.(C - S))^2.
    const sDotC = sx * cx + sy * cy + sz * cz;
    const s = f32x4.splat(<f32>(<f64>scale * d2 * d2 / (sDotC * sDotC)));
    const block = out + <usize>(v - view0) * blockBytes;
    memory.fill(block, 0, rowBytes);
    for (let r = 0; r < nRows; r++) {
      const src = proj + ((<usize>v * <usize>nRows + <usize>r) * <usize>nCh << 2);
      const dst = block + <usize>(r + 1) * rowBytes;
      store<f32>(dst, 0);
      let k = 0;
      for (; k + 4 <= nCh; k += 4) v128.store(dst + (<usize>(k + 1) << 2), f32x4.mul(v128.load(src + (<usize>k << 2)), s));
      for (; k < nCh; k++) store<f32>(dst + (<usize>(k + 1) << 2), load<f32>(src + (<usize>k << 2)) * f32x4.extract_lane(s, 0));
      memory.fill(dst + (<usize>(nCh + 1) << 2), 0, <usize>(stride - nCh - 1) << 2);
    }
    memory.fill(block + <usize>(nRows + 1) * rowBytes, 0, rowBytes << 1);
  }
}

/** Lines [line0, line1) of x (nx voxels each) from rows of stride nxs at src into packed rows at dst. */
export function packRows(src: usize, nxs: i32, nx: i32, line0: i32, line1: i32, dst: usize): void {
  for (let l = line0; l < line1; l++) {
    memory.copy(dst + (<usize>l * <usize>nx << 2), src + (<usize>l * <usize>nxs << 2), <usize>nx << 2);
  }
}
