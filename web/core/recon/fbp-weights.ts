// Weights applied to projections before filtering in FBP: angular step, redundancy (full scan
// 1/2, Parker for short scans) and the fan-beam cosine pre-weight. All derived from the view
// vectors, so calibrated trajectories get the same treatment.
import { VIEW_STRIDE, firstChannelU, kernelKind, KernelKind, viewVectors } from '../geometry/view-vectors';
import type { Geometry } from '../geometry/types';
import { displacedDetectorWeight, displacement } from './displaced-detector';

/** Per-view source (or ray) angle, radians, unwrapped so that it changes continuously. */
export function viewAngles(views: Float32Array, kind: number): Float64Array {
  const n = views.length / VIEW_STRIDE;
  const out = new Float64Array(n);
  for (let v = 0; v < n; v++) {
    const b = v * VIEW_STRIDE;
    out[v] = kind === KernelKind.parallel ? Math.atan2(-views[b + 1], -views[b]) : Math.atan2(views[b + 1], views[b]);
    if (v > 0) {
      while (out[v] - out[v - 1] > Math.PI) out[v] -= 2 * Math.PI;
      while (out[v] - out[v - 1] < -Math.PI) out[v] += 2 * Math.PI;
    }
  }
  return out;
}

/** Angular weight per view: half the gap to each neighbour (the end views count their own gap twice). */
export function angularSteps(beta: Float64Array): Float64Array {
  const n = beta.length;
  const out = new Float64Array(n);
  if (n === 1) return out.fill(Math.PI);
  for (let v = 0; v < n; v++) {
    const prev = v > 0 ? Math.abs(beta[v] - beta[v - 1]) : Math.abs(beta[1] - beta[0]);
    const next = v < n - 1 ? Math.abs(beta[v + 1] - beta[v]) : Math.abs(beta[n - 1] - beta[n - 2]);
    out[v] = (prev + next) / 2;
  }
  return out;
}

/**
 * Parker's short-scan weight (D. L. Parker, "Optimal short scan convolution reconstruction for
 * fanbeam CT", Med. Phys. 9(2):254-257, 1982) for source angle beta in [0, pi + 2 delta] and
 * fan angle gamma, with delta the half fan angle. Scans longer than pi + 2 delta use delta =
 * (span - pi)/2 ("generalized" Parker weights, Wesarg, Ebert & Bortfeld, Med. Phys. 29(12),
 * 2002, from memory). Conjugate rays (beta, gamma) and (beta + pi + 2 gamma, -gamma) sum to 1.
 */
export function parkerWeight(beta: number, gamma: number, delta: number): number {
  let w: number;
  if (beta < 0 || beta > Math.PI + 2 * delta) w = 0;
  else if (beta <= 2 * delta - 2 * gamma) w = Math.sin((Math.PI / 4) * (beta / (delta - gamma))) ** 2;
  else if (beta <= Math.PI - 2 * gamma) w = 1;
  else w = Math.sin((Math.PI / 4) * ((Math.PI + 2 * delta - beta) / (delta + gamma))) ** 2;
  return Number.isFinite(w) ? Math.min(1, Math.max(0, w)) : 0;
}

export interface Preweights {
  /**
   * nViews x nChannels weights (angular step x redundancy x cosine pre-weight); or, when
   * `perView` is set (a factored result), one row of nChannels that view v uses scaled by perView[v].
   */
  weights: Float32Array;
  perView?: Float32Array;
  /** What the user should know (short angular range and the like). */
  warnings: string[];
  /** Scan type found from the angles. */
  scanType: 'full' | 'short' | 'limited';
}

/** True when every view has the distances of view 0. */
function sameDistances(n: number, distances: (v: number) => { R: number; D: number }, same: (a: number, b: number) => boolean): boolean {
  const { R, D } = distances(0);
  for (let v = 1; v < n; v++) {
    const d = distances(v);
    if (!same(d.R, R) || !same(d.D, D)) return false;
  }
  return true;
}

/** Fan angle of channel coordinate u (mm) on a detector at distance D (flat or curved). */
export function fanAngle(u: number, D: number, curved: boolean): number {
  return curved ? u / D : Math.atan(u / D);
}

/**
 * FBP pre-weights for a geometry with `channels` channels starting at `u0` (mm); pass the
 * detector's own values, or those of an extended detector (the geometry's own detector is then
 * the measured one: it sets the short-scan check and the displaced-detector weights of a full
 * turn, displaced-detector.ts). For fan beams: cos(gamma) (flat,
 * Kak & Slaney eq. for R'(s) = R(s) D / sqrt(D^2 + s^2)) or R cos(gamma) (curved, R'(gamma) =
 * R(gamma) D cos gamma in their notation).
 */
export function fbpPreweights(g: Geometry, channels = g.detector.channels, u0 = firstChannelU(g), allowFactored = false): Preweights {
  const views = viewVectors(g);
  const kind = kernelKind(g);
  const n = views.length / VIEW_STRIDE;
  const pitch = g.detector.pitch[0];
  const beta = viewAngles(views, kind);
  const dBeta = angularSteps(beta);
  const warnings: string[] = [];
  const span = n > 1 ? Math.abs(beta[n - 1] - beta[0]) : 0;
  const step = n > 1 ? span / (n - 1) : Math.PI;
  const sign = n > 1 && beta[n - 1] < beta[0] ? -1 : 1;
  const fan = kind !== KernelKind.parallel;

  // Half fan angle of the detector (largest |gamma|), for the short-scan check.
  let delta = 0;
  const distances = (v: number) => {
    const b = v * VIEW_STRIDE;
    const sx = views[b], sy = views[b + 1];
    const nx = views[b + 3] - sx, ny = views[b + 4] - sy;
    const D = Math.hypot(nx, ny);
    return { R: -(sx * nx + sy * ny) / D, D };
  };
  // Outer edges of the measured detector, as fan angles (fan) or u (parallel).
  const measured0 = firstChannelU(g) - pitch / 2, measured1 = measured0 + g.detector.channels * pitch;
  const { D: D0 } = distances(0);
  const coord = (u: number) => (fan ? fanAngle(u, D0, kind === KernelKind.fanCurved) : u);
  if (fan) delta = Math.max(Math.abs(coord(measured0 + pitch / 2)), Math.abs(coord(measured1 - pitch / 2)));
  // Up to a channel of asymmetry (a quarter-channel offset, a crop off by half a channel) is a centred detector.
  const displaced = displacement(coord(measured0), coord(measured1), Math.abs(coord(pitch) - coord(0)));

  const coverage = span + step;
  let scanType: Preweights['scanType'];
  if (coverage >= 2 * Math.PI - step / 2) scanType = 'full';
  else if (coverage >= Math.PI - step / 2) scanType = 'short';
  else scanType = 'limited';
  const deltaScan = Math.max(0, (span - Math.PI) / 2);
  if (scanType === 'full' && coverage > 2 * Math.PI + step) {
    warnings.push(`the views cover ${(coverage * 180 / Math.PI).toFixed(1)} degrees; rays measured more than twice are weighted as if the scan were one turn`);
  }
  if (scanType === 'short' && fan && deltaScan < delta - step) {
    warnings.push(`short scan of ${(span * 180 / Math.PI).toFixed(1)} degrees is less than 180 degrees plus the fan angle (${((Math.PI + 2 * delta) * 180 / Math.PI).toFixed(1)}): some rays are missing`);
  }
  if (scanType === 'limited') {
    warnings.push(`limited-angle scan (${(coverage * 180 / Math.PI).toFixed(1)} degrees): FBP cannot recover the missing directions`);
  }

  // Fan angle and cosine pre-weight per channel, recomputed only when a view's distances differ
  // from the previous view's by more than float32 rounding of the view table (circular scans: once).
  const gammas = new Float64Array(channels), cosines = new Float64Array(channels).fill(1);
  let lastR = NaN, lastD = NaN;
  const same = (a: number, b: number) => Math.abs(a - b) <= 1e-6 * Math.abs(b);
  // A full turn with the same distances in every view factors into a channel row times a view
  // scale (redundancy and cosine depend on the channel only, the angular step on the view).
  if (allowFactored && scanType === 'full' && (!fan || sameDistances(n, distances, same))) {
    const { R, D } = fan ? distances(0) : { R: 1, D: 1 };
    const row = new Float32Array(channels);
    for (let k = 0; k < channels; k++) {
      const gamma = fan ? fanAngle(u0 + k * pitch, D, kind === KernelKind.fanCurved) : 0;
      const cosine = !fan ? 1 : kind === KernelKind.fanCurved ? R * Math.cos(gamma) : Math.cos(gamma);
      row[k] = (displaced ? displacedDetectorWeight(fan ? gamma : u0 + k * pitch, displaced) : 0.5) * cosine;
    }
    return { weights: row, perView: Float32Array.from(dBeta), warnings, scanType };
  }
  const weights = new Float32Array(n * channels);
  for (let v = 0; v < n; v++) {
    const { R, D } = fan ? distances(v) : { R: 1, D: 1 };
    if (fan && !(same(R, lastR) && same(D, lastD))) {
      for (let k = 0; k < channels; k++) {
        gammas[k] = fanAngle(u0 + k * pitch, D, kind === KernelKind.fanCurved);
        cosines[k] = kind === KernelKind.fanCurved ? R * Math.cos(gammas[k]) : Math.cos(gammas[k]);
      }
      [lastR, lastD] = [R, D];
    }
    const betaRel = sign * (beta[v] - beta[0]);
    const row = v * channels;
    if (scanType === 'full' && !displaced) {
      for (let k = 0; k < channels; k++) weights[row + k] = dBeta[v] * 0.5 * cosines[k];
      continue;
    }
    if (scanType === 'full') {
      for (let k = 0; k < channels; k++) weights[row + k] = dBeta[v] * displacedDetectorWeight(fan ? gammas[k] : u0 + k * pitch, displaced!) * cosines[k];
      continue;
    }
    for (let k = 0; k < channels; k++) {
      let red = 1;
      if (scanType === 'short') red = parkerWeight(betaRel, -sign * gammas[k], fan ? Math.max(deltaScan, 1e-9) : deltaScan);
      if (scanType === 'short' && !fan && deltaScan < 1e-9) red = 1;
      weights[row + k] = dBeta[v] * red * cosines[k];
    }
  }
  return { weights, warnings, scanType };
}
