// Plain TypeScript twin of the fan-beam (flat detector) pixel-driven backprojector, used only
// as the benchmark's baseline: same algorithm as assembly/backproject.ts, scalar, no Wasm.
import { VIEW_STRIDE } from '../../core/geometry/view-vectors';

export function backprojectFanFlatTs(
  img: Float32Array, nx: number, ny: number, dx: number, dy: number, x0: number, y0: number,
  views: Float32Array, nViews: number, filt: Float32Array, stride: number, nCh: number, u0: number, pitch: number,
): void {
  for (let v = 0; v < nViews; v++) {
    const b = v * VIEW_STRIDE;
    const ax = views[b], ay = views[b + 1];
    let ux = views[b + 6], uy = views[b + 7];
    const ul = Math.hypot(ux, uy);
    ux /= ul; uy /= ul;
    let nxv = views[b + 3] - ax, nyv = views[b + 4] - ay;
    const dist = Math.hypot(nxv, nyv);
    nxv /= dist; nyv /= dist;
    const r = -(ax * nxv + ay * nyv);
    const row = v * stride;
    for (let j = 0; j < ny; j++) {
      const y = y0 + j * dy;
      for (let i = 0; i < nx; i++) {
        const x = x0 + i * dx;
        const ln = (x - ax) * nxv + (y - ay) * nyv;
        const lu = (x - ax) * ux + (y - ay) * uy;
        const inv = 1 / ln;
        let f = ((dist * lu * inv) - u0) / pitch + 1;
        f = Math.min(Math.max(f, 0), nCh + 1);
        const k = Math.floor(f);
        const t = f - k;
        const val = filt[row + k] + t * (filt[row + k + 1] - filt[row + k]);
        const w = r * inv;
        img[j * nx + i] += val * w * w;
      }
    }
  }
}
