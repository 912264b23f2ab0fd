// The first step of differentiated backprojection (DBP): per measured ray, the derivative of
// the data across parallel lines, weighted so that backprojecting it (dbp-points.ts) gives the
// Hilbert transform of the object along chosen lines (Noo, Clackdoyle & Pack 2004, Phys Med Biol
// 49:3903, "A two-step Hilbert transform method for 2D image reconstruction"; REFERENCES.md [noo2004]).
//
// Parallel beam, detector axis U (the Radon normal theta) and coordinate u = x.U:
//   H_e f(x) = -(1/2pi) sum_v dphi_v w_v sgn(U_v.e) dp/du(v, x.U_v)
// (projection-slice theorem: the s-derivative is 2 pi i nu, the backprojection over a half turn
// divides by |nu|, so the sum is 2 pi i sgn(xi.e) F = -2 pi H_e f; w_v: redundancy, 1/2 for a
// full turn, Parker weights for a short scan).
// Fan beam, source a(psi) on the trajectory: moving the source while keeping a ray's direction
// alpha fixed translates the line, d/dq g(q, alpha) = a'.theta dp/ds (theta normal to alpha), and
// d(phi)/d(psi) = |a'.theta| / |x - a| for the lines through x, so
//   H_e f(x) = -(1/2pi) sum_v w sgn(theta.e) sgn(a'.theta) dg/dpsi|_alpha dpsi_v / |x - a_v|,
// the fan-beam DBP of Noo et al. (2004). At fixed alpha the fan angle gamma follows the
// gantry: dgamma/dpsi = -sigma with sigma = sgn(n x U) (-1 for the circular views of DEVELOPERS.md, Geometry), and
// dg/dpsi|_alpha = dg/dpsi|_u + dgamma/dpsi * dg/dgamma, dg/dgamma = (D^2 + u^2)/D dg/du on a flat
// detector, D dg/du on a curved one.
// This module returns, per view and channel, everything but the factors that depend on the
// point: sgn(theta.e) (the chord direction) and 1/|x - a| (fan beams), applied by the kernel.
import { InputError } from '../errors';
import type { Geometry } from '../geometry/types';
import { firstChannelU, kernelKind, KernelKind, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import { angularSteps, fanAngle, fbpPreweights, viewAngles } from '../recon/fbp-weights';
import type { Scan } from '../scan';

export interface DbpDerivative {
  /** nViews x nChannels, channel fastest. */
  data: Float32Array;
  /** Warnings of the redundancy weighting (short scans and the like). */
  warnings: string[];
}

/** Neighbouring views for a central difference: wraps around a full turn, else one-sided at the ends. */
function neighbours(beta: Float64Array, full: boolean): { prev: Int32Array; next: Int32Array; span: Float64Array } {
  const n = beta.length;
  const prev = new Int32Array(n), next = new Int32Array(n), span = new Float64Array(n);
  const turn = beta[n - 1] > beta[0] ? 2 * Math.PI : -2 * Math.PI;
  for (let v = 0; v < n; v++) {
    let p = v - 1, q = v + 1, bp = beta[p], bq = beta[q];
    if (p < 0) [p, bp] = full ? [n - 1, beta[n - 1] - turn] : [v, beta[v]];
    if (q >= n) [q, bq] = full ? [0, beta[0] + turn] : [v, beta[v]];
    prev[v] = p; next[v] = q; span[v] = bq - bp;
  }
  return { prev, next, span };
}

/** Redundancy weight per ray: the FBP pre-weight without its angular step and cosine factor. */
function redundancy(g: Geometry, views: Float32Array, kind: number): { w: Float32Array; warnings: string[]; scanType: string } {
  const { weights, warnings, scanType } = fbpPreweights(g);
  const n = views.length / VIEW_STRIDE, nCh = g.detector.channels;
  const dBeta = angularSteps(viewAngles(views, kind));
  const u0 = firstChannelU(g), pitch = g.detector.pitch[0];
  const w = new Float32Array(n * nCh);
  for (let v = 0; v < n; v++) {
    const { R, D } = distances(views, v);
    for (let k = 0; k < nCh; k++) {
      let cosine = 1;
      if (kind !== KernelKind.parallel) {
        const gamma = fanAngle(u0 + k * pitch, D, kind === KernelKind.fanCurved);
        cosine = kind === KernelKind.fanCurved ? R * Math.cos(gamma) : Math.cos(gamma);
      }
      w[v * nCh + k] = weights[v * nCh + k] / (dBeta[v] * cosine);
    }
  }
  return { w, warnings, scanType };
}

/** Source-isocentre distance along the central ray and source-detector distance of view v (fan). */
function distances(views: Float32Array, v: number): { R: number; D: number } {
  const b = v * VIEW_STRIDE;
  const sx = views[b], sy = views[b + 1];
  const nx = views[b + 3] - sx, ny = views[b + 4] - sy;
  const D = Math.hypot(nx, ny);
  return { R: -(sx * nx + sy * ny) / D, D };
}

/** Central difference along channels (one-sided at the detector edges), per unit of u. */
function channelDerivative(row: Float32Array, k: number, pitch: number): number {
  const n = row.length;
  if (n === 1) return 0;
  if (k === 0) return (row[1] - row[0]) / pitch;
  if (k === n - 1) return (row[n - 1] - row[n - 2]) / pitch;
  return (row[k + 1] - row[k - 1]) / (2 * pitch);
}

/**
 * The weighted ray derivatives of a 2D scan (parallel or fan, flat or curved detector). The
 * views must measure every line through the field of view: a full turn or a short scan.
 */
export function dbpDerivative(scan: Scan): DbpDerivative {
  const g = scan.geometry;
  const views = viewVectors(g);
  const kind = kernelKind(g);
  const n = views.length / VIEW_STRIDE, nCh = g.detector.channels;
  const { w, warnings, scanType } = redundancy(g, views, kind);
  if (scanType === 'limited') {
    throw new InputError(`geometry angles: the views cover less than a half turn; differentiated backprojection needs every line through the field of view (a full turn, or 180 degrees plus the fan angle)`);
  }
  const pitch = g.detector.pitch[0], u0 = firstChannelU(g);
  const out = new Float32Array(n * nCh);
  const c = -1 / (2 * Math.PI);
  const data = scan.data;
  if (kind === KernelKind.parallel) {
    const dBeta = angularSteps(viewAngles(views, kind));
    for (let v = 0; v < n; v++) {
      const row = data.subarray(v * nCh, (v + 1) * nCh);
      for (let k = 0; k < nCh; k++) out[v * nCh + k] = c * dBeta[v] * w[v * nCh + k] * channelDerivative(row, k, pitch);
    }
    return { data: out, warnings };
  }
  const psi = viewAngles(views, kind);
  const dPsiView = angularSteps(psi);
  const { prev, next, span } = neighbours(psi, scanType === 'full');
  const curved = kind === KernelKind.fanCurved;
  for (let v = 0; v < n; v++) {
    const b = v * VIEW_STRIDE;
    const { D } = distances(views, v);
    const nx = (views[b + 3] - views[b]) / D, ny = (views[b + 4] - views[b + 1]) / D;
    const sigma = Math.sign(nx * views[b + 7] - ny * views[b + 6]);
    // a' ~ (a_next - a_prev) / span: only its side of the central ray matters.
    const bp = prev[v] * VIEW_STRIDE, bq = next[v] * VIEW_STRIDE;
    const dax = (views[bq] - views[bp]) / span[v], day = (views[bq + 1] - views[bp + 1]) / span[v];
    const side = Math.sign(nx * day - ny * dax);
    const row = data.subarray(v * nCh, (v + 1) * nCh);
    const rowPrev = data.subarray(prev[v] * nCh, (prev[v] + 1) * nCh), rowNext = data.subarray(next[v] * nCh, (next[v] + 1) * nCh);
    for (let k = 0; k < nCh; k++) {
      const u = u0 + k * pitch;
      const dPsi = (rowNext[k] - rowPrev[k]) / span[v];
      const dGamma = (curved ? D : (D * D + u * u) / D) * channelDerivative(row, k, pitch);
      // Redundancy w is per ray; the cosine of the FBP pre-weight is not part of it.
      out[v * nCh + k] = c * dPsiView[v] * w[v * nCh + k] * side * (dPsi - sigma * dGamma);
    }
  }
  return { data: out, warnings };
}
