// Per-view ray tables for the 2D ray-driven projector (Joseph's method).
//
// For view v, channel k, the ray is found from the view vectors (VIEW_STRIDE floats per view):
//   parallel:   passes through C + u_k U along the unit direction a
//   fan flat:   from the source S through the detector point C + u_k U
//   fan curved: from S at fan angle g_k = u_k / |C - S| from the central ray (equiangular arc)
// with u_k = u0 + k * pitch (mm). Only x and y are used (2D).
//
// Joseph's method (P. M. Joseph, "An improved algorithm for reprojecting rays through pixel
// images", IEEE Trans. Med. Imaging 1(3):192-196, 1982) steps one pixel at a time along the axis
// the ray is most aligned with and interpolates linearly along the other. For a ray stepping
// over columns i (x-major) the padded row coordinate is t(i) = A + B i, with one zero pixel of
// padding so that t = 0 is row -1 and t = ny + 1 is row ny; the step length is w = dx / |dir_x|.
// Rows (y-major) are the same with x and y swapped.
//
// The table holds, per channel, for the x-major and the y-major sweep: A, B, w (w = 0 when the
// ray belongs to the other sweep) and the step range [lo, hi] that can touch the image.
// Layout (nPad = nCh rounded up to 4; every array nPad long, f32 unless noted):
//   0: Ax  1: Bx  2: Wx  3: loX(i32)  4: hiX(i32)  5: Ay  6: By  7: Wy  8: loY(i32)  9: hiY(i32)
import { KIND_PARALLEL, KIND_FAN_FLAT, VIEW_STRIDE } from './abi';
import { ldf, stf, sti } from './memory';

export const RAY_TABLE_ARRAYS: i32 = 10;

/** Number of floats a ray table needs for nCh channels. */
export function rayTableFloats(nCh: i32): i32 {
  return RAY_TABLE_ARRAYS * ((nCh + 3) & ~3);
}

/** Fills the ray table of view v (see the file comment). */
export function buildRayTable(
  views: usize, v: i32, kind: i32, nCh: i32, u0: f32, pitch: f32,
  nx: i32, ny: i32, dx: f32, dy: f32, x0: f32, y0: f32, table: usize,
): void {
  const nPad = (nCh + 3) & ~3;
  const b = views + (<usize>(v * VIEW_STRIDE) << 2);
  const ax = <f64>ldf(b, 0), ay = <f64>ldf(b, 1);
  const cx = <f64>ldf(b, 3), cy = <f64>ldf(b, 4);
  let ux = <f64>ldf(b, 6), uy = <f64>ldf(b, 7);
  // Central ray for the curved detector.
  let nxv = cx - ax, nyv = cy - ay;
  const dist = Math.sqrt(nxv * nxv + nyv * nyv);
  nxv /= dist; nyv /= dist;
  const ul = Math.sqrt(ux * ux + uy * uy);
  ux /= ul; uy /= ul;
  for (let k = 0; k < nPad; k++) {
    if (k >= nCh) { disableLane(table, nPad, k, nx, ny); continue; }
    const u = <f64>u0 + <f64>k * <f64>pitch;
    let px: f64, py: f64, qx: f64, qy: f64;
    if (kind == KIND_PARALLEL) {
      px = cx + u * ux; py = cy + u * uy;
      qx = ax; qy = ay;
    } else if (kind == KIND_FAN_FLAT) {
      px = ax; py = ay;
      qx = cx + u * ux - ax; qy = cy + u * uy - ay;
    } else {
      const g = u / dist;
      px = ax; py = ay;
      qx = Math.cos(g) * nxv + Math.sin(g) * ux;
      qy = Math.cos(g) * nyv + Math.sin(g) * uy;
    }
    const ql = Math.sqrt(qx * qx + qy * qy);
    qx /= ql; qy /= ql;
    if (Math.abs(qx) >= Math.abs(qy)) {
      // x-major: y(i) = py + (x0 + i dx - px) qy/qx ; t = (y - y0)/dy + 1
      const s = qy / qx;
      const A = (py + (<f64>x0 - px) * s - <f64>y0) / <f64>dy + 1.0;
      const B = (<f64>dx * s) / <f64>dy;
      setSweep(table, nPad, k, 0, A, B, <f64>dx / Math.abs(qx), nx, ny);
      setIdle(table, nPad, k, 5, ny);
    } else {
      const s = qx / qy;
      const A = (px + (<f64>y0 - py) * s - <f64>x0) / <f64>dx + 1.0;
      const B = (<f64>dy * s) / <f64>dx;
      setSweep(table, nPad, k, 5, A, B, <f64>dy / Math.abs(qy), ny, nx);
      setIdle(table, nPad, k, 0, nx);
    }
  }
}

@inline function disableLane(table: usize, nPad: i32, k: i32, nx: i32, ny: i32): void {
  setIdle(table, nPad, k, 0, nx);
  setIdle(table, nPad, k, 5, ny);
}

/** Marks lane k of the sweep starting at array `first` as unused (no steps, zero weight). */
@inline function setIdle(table: usize, nPad: i32, k: i32, first: i32, nSteps: i32): void {
  stf(table, first * nPad + k, -1.0e6);
  stf(table, (first + 1) * nPad + k, 0);
  stf(table, (first + 2) * nPad + k, 0);
  sti(table, (first + 3) * nPad + k, nSteps);
  sti(table, (first + 4) * nPad + k, -1);
}

/** Lane k of a sweep over nSteps steps across an other-axis extent of n pixels. */
@inline function setSweep(
  table: usize, nPad: i32, k: i32, first: i32, A: f64, B: f64, w: f64, nSteps: i32, n: i32,
): void {
  let lo = 0, hi = nSteps - 1;
  const top = <f64>(n + 1);
  if (Math.abs(B) < 1e-12) {
    if (A <= 0 || A >= top) { lo = nSteps; hi = -1; }
  } else {
    const i1 = (0 - A) / B, i2 = (top - A) / B;
    const a = Math.min(i1, i2), c = Math.max(i1, i2);
    lo = max(lo, <i32>Math.max(Math.floor(a) - 1, -1.0));
    hi = min(hi, <i32>Math.min(Math.ceil(c) + 1, <f64>nSteps));
  }
  stf(table, first * nPad + k, <f32>A);
  stf(table, (first + 1) * nPad + k, <f32>B);
  stf(table, (first + 2) * nPad + k, <f32>w);
  sti(table, (first + 3) * nPad + k, lo);
  sti(table, (first + 4) * nPad + k, hi);
}
