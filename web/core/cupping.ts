// Cupping: the centre-to-rim shape of a reconstruction inside the measured field of view.
// Truncation makes FBP bright near the FOV edge and shifts it overall (REFERENCES.md [cupping]:
// no standard definition; the common usage compares ROI means at about
// 0.9 R_FOV and at the centre). Rimfill reports the rim / centre ratio of the object's pixels
// and, with a reference, the same ratio of the reference, so that an object that is not uniform
// is judged against its own true profile; and a radial profile for plotting.
import { gridOrigin, type Image2D } from './image';

/** Rings of the radial profile, from the centre to the FOV edge. */
export const PROFILE_RINGS = 10;

/** Central disc and rim ring, as fractions of the FOV radius (common practice: about 0.9 R_FOV for the rim). */
const CENTRE = 0.25;
const RIM = [0.8, 0.95] as const;

export interface CuppingFigures {
  /** Mean of the image over the object's pixels in the central disc (r < 0.25 R_FOV), 1/mm. */
  centre: number;
  /** Mean over the object's pixels in the rim ring (0.8 to 0.95 R_FOV), 1/mm. */
  rim: number;
  /** rim / centre: 1 for a flat uniform object, above 1 for a bright rim. */
  ratio: number;
  /** The reference's rim / centre over the same pixels, when a reference is given. */
  referenceRatio: number | null;
  /** ratio / referenceRatio - 1 (or ratio - 1 without a reference): 0 when the shape is right. */
  excess: number;
  /** Mean per ring (PROFILE_RINGS rings of equal width up to the FOV radius). */
  profile: { ringOuterMm: number[]; image: number[]; reference: number[] | null };
}

/**
 * Cupping figures of `image` inside the FOV radius (mm). `reference` (same grid, mu) and
 * `mask` (1 = object pixel) are optional; without a mask every pixel counts.
 */
export function cupping(image: Image2D, fovRadiusMm: number, reference?: Float32Array, mask?: Uint8Array): CuppingFigures | null {
  const g = image.grid;
  const { x0, y0 } = gridOrigin(g);
  const sums = { c: 0, r: 0, cRef: 0, rRef: 0, nc: 0, nr: 0 };
  const ring = new Float64Array(PROFILE_RINGS), ringRef = new Float64Array(PROFILE_RINGS), ringN = new Float64Array(PROFILE_RINGS);
  for (let j = 0; j < g.ny; j++) {
    for (let i = 0; i < g.nx; i++) {
      const k = j * g.nx + i;
      if (mask && !mask[k]) continue;
      const f = Math.hypot(x0 + i * g.dx, y0 + j * g.dy) / fovRadiusMm;
      if (f > 1) continue;
      const v = image.data[k], ref = reference ? reference[k] : 0;
      if (f < CENTRE) { sums.c += v; sums.cRef += ref; sums.nc++; }
      if (f >= RIM[0] && f <= RIM[1]) { sums.r += v; sums.rRef += ref; sums.nr++; }
      const b = Math.min(PROFILE_RINGS - 1, Math.floor(f * PROFILE_RINGS));
      ring[b] += v; ringRef[b] += ref; ringN[b]++;
    }
  }
  if (!sums.nc || !sums.nr) return null;
  const centre = sums.c / sums.nc, rim = sums.r / sums.nr;
  const ratio = rim / centre;
  const referenceRatio = reference ? sums.rRef / sums.nr / (sums.cRef / sums.nc) : null;
  const mean = (a: Float64Array) => Array.from(a, (s, b) => (ringN[b] ? s / ringN[b] : NaN));
  return {
    centre, rim, ratio, referenceRatio,
    excess: referenceRatio === null ? ratio - 1 : ratio / referenceRatio - 1,
    profile: {
      ringOuterMm: Array.from({ length: PROFILE_RINGS }, (_, b) => ((b + 1) * fovRadiusMm) / PROFILE_RINGS),
      image: mean(ring),
      reference: reference ? mean(ringRef) : null,
    },
  };
}
