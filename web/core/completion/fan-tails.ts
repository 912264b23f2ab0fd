// Sampling tails designed in the parallel domain onto the scan's own extended detector: the
// extended channel at u of view beta is the parallel line theta = beta - gamma(u), s = s(u)
// (parallel-domain.ts), whose value is the stretched tail of that parallel view (linear in
// theta between the domain's views). Lines within the field of view (a displaced detector's short
// side) take the rebinned measured value.
import type { Geometry } from '../geometry/types';
import { firstChannelU, kernelKind, viewVectors } from '../geometry/view-vectors';
import { viewAngles } from '../recon/fbp-weights';
import { maxTailChannels, extendedLayout, type DetectorExtension } from '../truncation/extension-plan';
import { EXTEND_CODES, EXTEND_PARAMS } from '../truncation/extend-methods';
import { rayCoordinates } from '../truncation/ray-coords';
import { tailReach, tailValue, type DomainTails } from './domain-tails';
import type { ParallelDomain } from './parallel-domain';

/** Value of parallel line (theta, s) from the domain: measured inside the FOV, the stretched tail beyond. */
export function domainValue(pd: ParallelDomain, t: DomainTails, theta: number, s: number): number {
  const step = (2 * Math.PI) / pd.nViews;
  let f = ((theta - pd.angles[0]) / step) % pd.nViews;
  if (f < 0) f += pd.nViews;
  const j0 = Math.floor(f) % pd.nViews, w = f - Math.floor(f), j1 = (j0 + 1) % pd.nViews;
  const S = pd.half * pd.ds;
  const at = (j: number): number => {
    if (s > S) return tailValue(t, pd.ds, j, 1, s - S);
    if (s < -S) return tailValue(t, pd.ds, j, 0, -S - s);
    const n = 2 * pd.half + 1;
    const fk = s / pd.ds + pd.half;
    const k0 = Math.min(n - 2, Math.max(0, Math.floor(fk))), wk = fk - k0;
    return (1 - wk) * pd.data[j * n + k0] + wk * pd.data[j * n + k0 + 1];
  };
  return (1 - w) * at(j0) + w * at(j1);
}

/** Channels to add on each side of the scan's detector so the longest stretched tail fits (at most maxTailChannels). */
export function channelsForTails(g: Geometry, pd: ParallelDomain, t: DomainTails): { left: number; right: number } {
  const reach = tailReach(t, pd.ds);
  let far = 0;
  for (let i = 0; i < reach.length; i++) far = Math.max(far, reach[i]);
  const rays = rayCoordinates(g);
  const S = pd.half * pd.ds + far + pd.ds;
  const limit = rays.form === 'parallel' ? S : Math.min(S, 0.95 * rays.sourceIsocenter);
  const u0 = firstChannelU(g), pitch = g.detector.pitch[0], nCh = g.detector.channels;
  const uLast = u0 + (nCh - 1) * pitch;
  const cap = maxTailChannels(nCh);
  return {
    left: Math.min(cap, Math.max(0, Math.ceil((u0 - rays.u(-limit)) / pitch) + 1)),
    right: Math.min(cap, Math.max(0, Math.ceil((rays.u(limit) - uLast) / pitch) + 1)),
  };
}

/**
 * The extension FBP runs with: `left` + `right` channels around the scan's detector, filled
 * from the domain (a table extension: no kernel tail formula).
 */
export function tableExtension(g: Geometry, pd: ParallelDomain, t: DomainTails, left: number, right: number): DetectorExtension {
  const beta = viewAngles(viewVectors(g), kernelKind(g));
  const nViews = beta.length, nCh = g.detector.channels;
  const { coord } = extendedLayout(g, left, right);
  const rays = rayCoordinates(g);
  const u0 = firstChannelU(g) - left * g.detector.pitch[0], pitch = g.detector.pitch[0];
  const table = new Float32Array(nViews * (left + right));
  const gamma = Float64Array.from({ length: left + nCh + right }, (_, k) => rays.gamma(u0 + k * pitch));
  for (let v = 0; v < nViews; v++) {
    for (let k = 0; k < left + right; k++) {
      const e = k < left ? k : k + nCh; // extended channel index
      table[v * (left + right) + k] = domainValue(pd, t, beta[v] - gamma[e], coord[e]);
    }
  }
  return { left, right, code: EXTEND_CODES.none, params: new Float32Array(nViews * EXTEND_PARAMS), coord, table };
}
