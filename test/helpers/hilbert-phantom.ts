// A small ellipse phantom for the DBP tests and the exact Hilbert transform of an ellipse
// phantom along a line.
//
// Along the line x + t e a uniform ellipse of value v is v on the interval [t1, t2] where the line
// crosses it (the chord of REFERENCES.md [ellipse-projection]), and the Hilbert transform of an
// interval's indicator is elementary: (1/pi) p.v. int_{t1}^{t2} ds / (t - s) = (1/pi) ln|(t - t1)
// / (t - t2)| (derived; the same result as the Hilbert transform of a rectangle in tables of
// Hilbert transforms, sign convention H f(t) = (1/pi) p.v. int f(s) / (t - s) ds; REFERENCES.md
// [hilbert-interval]). At the point
// itself (t = 0) that is (v/pi) ln|t1 / t2|.
import { inside, type Ellipse, type EllipsePhantom } from '../../web/core/phantoms/ellipse';

/** Where the line p + t e (|e| = 1) crosses ellipse `e`: [t1, t2], or null. */
export function ellipseInterval(el: Ellipse, px: number, py: number, ex: number, ey: number): [number, number] | null {
  const phi = (el.phiDeg * Math.PI) / 180, c = Math.cos(phi), s = Math.sin(phi);
  const rx = px - el.cx, ry = py - el.cy;
  const qx = (c * rx + s * ry) / el.a, qy = (-s * rx + c * ry) / el.b;
  const dx = (c * ex + s * ey) / el.a, dy = (-s * ex + c * ey) / el.b;
  const A = dx * dx + dy * dy, B = qx * dx + qy * dy, C = qx * qx + qy * qy - 1;
  const disc = B * B - A * C;
  if (disc <= 0) return null;
  return [(-B - Math.sqrt(disc)) / A, (-B + Math.sqrt(disc)) / A];
}

/** The Hilbert transform of the phantom along direction e at point p. */
export function phantomHilbert(p: EllipsePhantom, px: number, py: number, ex: number, ey: number): number {
  let sum = 0;
  for (const el of p.ellipses) {
    const iv = ellipseInterval(el, px, py, ex, ey);
    if (iv) sum += (el.value / Math.PI) * Math.log(Math.abs(iv[0] / iv[1]));
  }
  return sum;
}

/** True when every ellipse boundary is at least `margin` mm from (x, y) (16 probes on a circle). */
export function clearOfEdges(p: EllipsePhantom, x: number, y: number, margin: number): boolean {
  for (let a = 0; a < 16; a++) {
    const xs = x + margin * Math.cos((a * Math.PI) / 8), ys = y + margin * Math.sin((a * Math.PI) / 8);
    if (!p.ellipses.every((e) => inside(e, xs, ys) === inside(e, x, y))) return false;
  }
  return true;
}

/** A body (water-like, 1/mm) with an oblique soft insert, a low-density disk and a dense rod; radius 70 mm. */
export function smallPhantom(): EllipsePhantom {
  return {
    name: 'dbp-test', muWater: 0.02, radius: 70,
    ellipses: [
      { cx: 0, cy: 0, a: 66, b: 50, phiDeg: 0, value: 0.02 },
      { cx: 14, cy: 8, a: 22, b: 12, phiDeg: 30, value: 0.004 },
      { cx: -28, cy: -12, a: 10, b: 10, phiDeg: 0, value: -0.012 },
      { cx: 8, cy: -30, a: 5, b: 5, phiDeg: 0, value: 0.03 },
    ],
  };
}
