// Weights applied to projections before filtering in FBP: angular step, redundancy (full scan
// 1/2, Parker for short scans) and the fan-beam cosine pre-weight. All derived from the view
// vectors, so calibrated trajectories get the same treatment.
import { VIEW_STRIDE, firstChannelU, kernelKind, KernelKind, viewVectors } from '../geometry/view-vectors';
import type { Geometry } from '../geometry/types';
import { displacedDetectorWeight, displacement, type DisplacedDetector } from './displaced-detector';

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
  const span = n > 1 ? Math.abs(beta[n - 1] - beta[0]) : 0;
  const step = n > 1 ? span / (n - 1) : Math.PI;
  const fan = kind !== KernelKind.parallel;
  const distances = viewDistances(views);
  // Outer edges of the measured detector, as fan angles (fan) or u (parallel).
  const measured0 = firstChannelU(g) - pitch / 2, measured1 = measured0 + g.detector.channels * pitch;
  const coord = (u: number) => (fan ? fanAngle(u, distances(0).D, kind === KernelKind.fanCurved) : u);
  // Half fan angle of the detector (largest |gamma|), for the short-scan check.
  const delta = fan ? Math.max(Math.abs(coord(measured0 + pitch / 2)), Math.abs(coord(measured1 - pitch / 2))) : 0;
  // Up to a channel of asymmetry (a quarter-channel offset, a crop off by half a channel) is a centred detector.
  const displaced = displacement(coord(measured0), coord(measured1), Math.abs(coord(pitch) - coord(0)));
  const { scanType, deltaScan, warnings } = classifyScan(span, step, delta, fan);
  const det: ChannelGeometry = { kind, fan, channels, u0, pitch, displaced };
  const same = (a: number, b: number) => Math.abs(a - b) <= 1e-6 * Math.abs(b);
  // A full turn with the same distances in every view factors into a channel row times a view
  // scale (redundancy and cosine depend on the channel only, the angular step on the view).
  if (allowFactored && scanType === 'full' && (!fan || sameDistances(n, distances, same))) {
    return { weights: factoredRow(det, fan ? distances(0) : { R: 1, D: 1 }), perView: Float32Array.from(dBeta), warnings, scanType };
  }
  const sign = n > 1 && beta[n - 1] < beta[0] ? -1 : 1;
  const weights = viewByViewWeights(det, { n, beta, dBeta, sign, scanType, deltaScan }, distances, same);
  return { weights, warnings, scanType };
}

/** The detector's channels as the weights see them. */
interface ChannelGeometry {
  kind: ReturnType<typeof kernelKind>;
  fan: boolean;
  channels: number;
  /** u of the first channel and the pitch, mm. */
  u0: number;
  pitch: number;
  /** Displaced-detector overlap (displaced-detector.ts), when the measured detector is asymmetric. */
  displaced: DisplacedDetector | undefined;
}

/** Source-to-isocentre (R) and source-to-detector (D) distances of view v, mm. */
function viewDistances(views: Float32Array): (v: number) => { R: number; D: number } {
  return (v) => {
    const b = v * VIEW_STRIDE;
    const sx = views[b], sy = views[b + 1];
    const nx = views[b + 3] - sx, ny = views[b + 4] - sy;
    const D = Math.hypot(nx, ny);
    return { R: -(sx * nx + sy * ny) / D, D };
  };
}

/** Full turn, short scan (180 degrees plus the fan) or limited angle, with what the user should know. */
function classifyScan(span: number, step: number, delta: number, fan: boolean): { scanType: Preweights['scanType']; deltaScan: number; warnings: string[] } {
  const warnings: string[] = [];
  const coverage = span + step;
  const deg = (a: number) => ((a * 180) / Math.PI).toFixed(1);
  let scanType: Preweights['scanType'];
  if (coverage >= 2 * Math.PI - step / 2) scanType = 'full';
  else if (coverage >= Math.PI - step / 2) scanType = 'short';
  else scanType = 'limited';
  const deltaScan = Math.max(0, (span - Math.PI) / 2);
  if (scanType === 'full' && coverage > 2 * Math.PI + step) {
    warnings.push(`the views cover ${deg(coverage)} degrees; rays measured more than twice are weighted as if the scan were one turn`);
  }
  if (scanType === 'short' && fan && deltaScan < delta - step) {
    warnings.push(`short scan of ${deg(span)} degrees is less than 180 degrees plus the fan angle (${deg(Math.PI + 2 * delta)}): some rays are missing`);
  }
  if (scanType === 'limited') warnings.push(`limited-angle scan (${deg(coverage)} degrees): FBP cannot recover the missing directions`);
  return { scanType, deltaScan, warnings };
}

/** Fan angle of channel k and its cosine pre-weight (cos gamma flat; R cos gamma curved). */
function channelCosine(det: ChannelGeometry, k: number, R: number, D: number): { gamma: number; cosine: number } {
  if (!det.fan) return { gamma: 0, cosine: 1 };
  const curved = det.kind === KernelKind.fanCurved;
  const gamma = fanAngle(det.u0 + k * det.pitch, D, curved);
  return { gamma, cosine: curved ? R * Math.cos(gamma) : Math.cos(gamma) };
}

/** The channel row of a factored full turn: redundancy (1/2 or displaced-detector) times cosine. */
function factoredRow(det: ChannelGeometry, { R, D }: { R: number; D: number }): Float32Array {
  const row = new Float32Array(det.channels);
  for (let k = 0; k < det.channels; k++) {
    const { gamma, cosine } = channelCosine(det, k, R, D);
    row[k] = (det.displaced ? displacedDetectorWeight(det.fan ? gamma : det.u0 + k * det.pitch, det.displaced) : 0.5) * cosine;
  }
  return row;
}

/**
 * Weights view by view: angular step x redundancy (1/2, displaced-detector or Parker) x cosine.
 * Fan angles and cosines are recomputed only when a view's distances differ from the previous
 * view's by more than float32 rounding of the view table (circular scans: once).
 */
function viewByViewWeights(
  det: ChannelGeometry,
  scan: { n: number; beta: Float64Array; dBeta: Float64Array; sign: number; scanType: Preweights['scanType']; deltaScan: number },
  distances: (v: number) => { R: number; D: number },
  same: (a: number, b: number) => boolean,
): Float32Array {
  const { channels, fan, displaced } = det;
  const { n, beta, dBeta, sign, scanType, deltaScan } = scan;
  const gammas = new Float64Array(channels), cosines = new Float64Array(channels).fill(1);
  let lastR = NaN, lastD = NaN;
  const weights = new Float32Array(n * channels);
  for (let v = 0; v < n; v++) {
    const { R, D } = fan ? distances(v) : { R: 1, D: 1 };
    if (fan && !(same(R, lastR) && same(D, lastD))) {
      for (let k = 0; k < channels; k++) ({ gamma: gammas[k], cosine: cosines[k] } = channelCosine(det, k, R, D));
      [lastR, lastD] = [R, D];
    }
    const row = v * channels;
    for (let k = 0; k < channels; k++) {
      let red: number;
      if (scanType === 'full') red = displaced ? displacedDetectorWeight(fan ? gammas[k] : det.u0 + k * det.pitch, displaced) : 0.5;
      else if (scanType === 'short' && (fan || deltaScan >= 1e-9)) red = parkerWeight(sign * (beta[v] - beta[0]), -sign * gammas[k], fan ? Math.max(deltaScan, 1e-9) : deltaScan);
      else red = 1;
      weights[row + k] = dBeta[v] * red * cosines[k];
    }
  }
  return weights;
}
