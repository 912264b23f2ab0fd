// The overlay that marks where a result is not determined (DBP outside the measured field of
// view, or on chords no knowledge reaches): RGBA pixels at the image's own resolution, laid out
// as greyPixels lays out the image (anterior, +y, at the top), so that the two are drawn with the
// same transform. A violet tint with denser diagonal stripes: no grey value of the image under
// any window looks like it, and the stripes keep it readable where the tint is faint.
import { gridOrigin, type ImageGrid } from '../../core/image';
import type { Point } from './measure';

/** The tint (RGB) and its opacity on plain and striped pixels (0..255). */
export const UNDETERMINED_TINT = { r: 178, g: 92, b: 255, alpha: 96, stripeAlpha: 168 } as const;
/** Stripe period along the diagonal, image pixels (two of every STRIPE_PERIOD are striped). */
const STRIPE_PERIOD = 6;

/** RGBA pixels (nx by ny, anterior at the top): the tint where `mask` is 1, transparent elsewhere. */
export function overlayPixels(mask: Uint8Array, nx: number, ny: number): Uint8ClampedArray {
  const out = new Uint8ClampedArray(nx * ny * 4);
  const t = UNDETERMINED_TINT;
  for (let row = 0; row < ny; row++) {
    const src = (ny - 1 - row) * nx;
    for (let i = 0; i < nx; i++) {
      if (mask[src + i] !== 1) continue;
      const o = (row * nx + i) * 4;
      out[o] = t.r;
      out[o + 1] = t.g;
      out[o + 2] = t.b;
      out[o + 3] = (i + row) % STRIPE_PERIOD < 2 ? t.stripeAlpha : t.alpha;
    }
  }
  return out;
}

/** True when the pixel nearest `p` (mm) is marked not determined; false off the grid. */
export function undeterminedAt(mask: Uint8Array, g: ImageGrid, p: Point): boolean {
  const { x0, y0 } = gridOrigin(g);
  const i = Math.round((p.x - x0) / g.dx), j = Math.round((p.y - y0) / g.dy);
  return i >= 0 && j >= 0 && i < g.nx && j < g.ny && mask[j * g.nx + i] === 1;
}

/** The legend on the panel (short: the switch's tooltip and the report say why). */
export const UNDETERMINED_LEGEND = 'Not determined (no value)';
