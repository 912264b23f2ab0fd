// FDK's formula evaluated directly at single points (Feldkamp, Davis & Kress, J. Opt. Soc. Am. A
// 1(6):612-619, 1984; REFERENCES.md [fdk-1984]), as an independent reference for the engine: exact ray
// integrals of the phantom, the cosine weight D / sqrt(D^2 + u^2 + v^2), a ramp filter applied
// by direct summation of Kak & Slaney's discrete kernel (eq. 61) on a very fine detector
// sampling (no FFT, no detector interpolation: the row is sampled on a grid through u*), and
// the distance weight (R / (R - s))^2. Full circular scan, redundancy 1/2, f64 throughout.
import type { SolidPhantom } from '../../web/core/phantoms/solid';
import { solidLineIntegral } from './solid-line';

export function fdkAtPoint(
  p: SolidPhantom, R: number, D: number, point: [number, number, number],
  opts: { views: number; step: number; halfWidth: number },
): number {
  const [x, y, z] = point;
  const tau = (opts.step * R) / D; // sample spacing on the virtual detector through the isocentre
  const m = Math.ceil(opts.halfWidth / opts.step);
  let f = 0;
  for (let v = 0; v < opts.views; v++) {
    const b = (2 * Math.PI * v) / opts.views;
    const c = Math.cos(b), s = Math.sin(b);
    const src = [R * c, R * s, 0];
    const ln = R - (x * c + y * s); // distance from the source along the central ray
    const uStar = (D * (-x * s + y * c)) / ln;
    const vStar = (D * z) / ln;
    let q = 0;
    for (let k = -m; k <= m; k++) {
      if (k !== 0 && k % 2 === 0) continue; // the kernel is zero at even offsets
      const u = uStar - k * opts.step;
      const det = [-(D - R) * c - u * s, -(D - R) * s + u * c, vStar];
      const d = [det[0] - src[0], det[1] - src[1], det[2] - src[2]];
      const l = Math.hypot(d[0], d[1], d[2]);
      const proj = solidLineIntegral(p, src, [d[0] / l, d[1] / l, d[2] / l]) * (D / l);
      const h = k === 0 ? 1 / (4 * tau * tau) : -1 / (k * k * Math.PI * Math.PI * tau * tau);
      q += tau * h * proj;
    }
    f += ((2 * Math.PI) / opts.views) * 0.5 * (R / ln) ** 2 * q;
  }
  return f;
}
