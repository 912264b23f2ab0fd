// What the prior-guided method fits on the channels beyond the detector: the prior's projections,
// joined to the measured data at each detector edge. A prior whose projection at the edge differs
// from the measured edge value (any prior that is not exact outside the field of view, and
// always the water-extended FBP whose re-projection overshoots) leaves a step in the completed
// sinogram between the last measured and the first fitted channel. Fitting both sides of a step
// puts a thin ring of the opposite sign at the field of view's edge (a step in the projections of
// every view at |s| = r is what a ring of radius r projects to), which then spreads inwards as
// the iterations go on. So per view and side the prior's projections are shifted by the measured
// edge mismatch, tapered to nothing with a cos^2 over the field of view's radius in s (the ray
// coordinate, truncation/ray-coords.ts): rays just beyond the edge cross nearly the same matter
// as the edge ray, rays far beyond cross other matter, where the prior's own projections stand.
// Completing truncated projections with a re-projected earlier image is the idea of Ruchala et
// al. 2002 (REFERENCES.md [ruchala-2002]); the edge matching and its taper are ours.
import type { Geometry } from '../geometry/types';
import { channelS } from '../truncation/ray-coords';

/**
 * Measured channels averaged for the edge mismatch: at least this many, and at least EDGE_MM of
 * s. Few, because a measured ray at s = r - e still crosses 2 sqrt(2 r e) mm of the field of
 * view, where the prior may be wrong for reasons the channels beyond the edge do not share (28 mm
 * at e = 1 mm, r = 100 mm); averaging 5 mm kept 25% more of a noisy prior's noise in
 * test/iterative/prior.test.ts.
 */
const EDGE_CHANNELS = 2;
const EDGE_MM = 1;

export interface CompletionInputs {
  /** The extended geometry (measured channels [k0, k1)). */
  geometry: Geometry;
  measured: [number, number];
  /** Channels per detector row. */
  nCh: number;
  /** Detector rows (lines) in all views. */
  lines: number;
  /** Radius of the measured field of view, mm: the taper's length in s. */
  taperMm: number;
}

/**
 * Fills the unmeasured channels of `target` (lines of nCh channels; the measured channels hold
 * the data) with the prior's projections `prior` joined to the data at each edge. Line integrals
 * stay non-negative.
 */
export function completeWithPrior(target: Float32Array, prior: Float32Array, c: CompletionInputs): void {
  const { nCh, lines, taperMm } = c;
  const [k0, k1] = c.measured;
  const s = channelS(c.geometry);
  const pitchS = Math.abs(s[k0 + 1] - s[k0]) || 1;
  const m = Math.min(k1 - k0, Math.max(EDGE_CHANNELS, Math.ceil(EDGE_MM / pitchS)));
  // Taper weight per unmeasured channel, from its distance in s beyond the edge.
  const taper = (k: number, edge: number) => {
    const t = Math.abs(s[k] - s[edge]) / taperMm;
    return t < 1 ? Math.cos((t * Math.PI) / 2) ** 2 : 0;
  };
  const left = Float32Array.from({ length: k0 }, (_, k) => taper(k, k0));
  const right = Float32Array.from({ length: nCh - k1 }, (_, j) => taper(k1 + j, k1 - 1));
  for (let q = 0; q < lines; q++) {
    const o = q * nCh;
    let dl = 0, dr = 0;
    for (let k = 0; k < m; k++) {
      dl += target[o + k0 + k] - prior[o + k0 + k];
      dr += target[o + k1 - 1 - k] - prior[o + k1 - 1 - k];
    }
    dl /= m;
    dr /= m;
    for (let k = 0; k < k0; k++) target[o + k] = Math.max(0, prior[o + k] + dl * left[k]);
    for (let j = 0; j < nCh - k1; j++) target[o + k1 + j] = Math.max(0, prior[o + k1 + j] + dr * right[j]);
  }
}
