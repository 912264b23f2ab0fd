// Mass consistency, the zeroth Helgason-Ludwig condition (S. Helgason 1965; D. Ludwig, Commun.
// Pure Appl. Math. 19:49-81, 1966; REFERENCES.md [helgason-ludwig]): every complete parallel-beam
// projection integrates to the same total, int P_theta(t) dt = int int f dx dy. Truncated
// views fall short of it by the mass outside the detector.
//
// Parallel beams are summed view by view. Fan beams are first rebinned to parallel views
// (theta = beta - gamma, t = R sin gamma in this project's convention): parallel view theta
// at channel k is fan channel k of the view at beta = theta + gamma_k, interpolated linearly
// between the two nearest fan views; this needs a full turn, so that every theta is covered.
import { isFullScan } from '../geometry/coverage';
import { kernelKind, viewVectors } from '../geometry/view-vectors';
import { viewAngles } from '../recon/fbp-weights';
import type { Scan } from '../scan';
import { EDGE_CHANNELS } from './edge-stats';
import { rayCoordinates, channelWidthS } from './ray-coords';
import { firstChannelU } from '../geometry/view-vectors';

export interface MassReport {
  /** How the per-view totals were formed. */
  form: 'parallel' | 'rebinned';
  /** Angle of each (rebinned) parallel view, radians, one per scan view. */
  angles: Float64Array;
  /** Measured mass of each view: sum of p * ds, mm (= int int mu dx dy over the measured rays). */
  totals: Float64Array;
  /** 1 where the view is cut off on neither side. */
  complete: Uint8Array;
  /** The object's mass: median over complete views, or the largest view total (a lower bound) when none is complete. */
  totalMass: number;
  basis: 'complete-views' | 'lower-bound';
  completeViews: number;
  /** (max - min) / median of the complete views' totals (NaN with fewer than two). */
  spread: number;
  /** totalMass - totals for cut-off views, 0 for complete ones. */
  missing: Float64Array;
}

/** Fewest complete views for the total mass to count as known. */
export const MIN_COMPLETE_VIEWS = 3;

/** Why mass consistency cannot be evaluated for a scan, or undefined when it can. */
export function massUnavailable(scan: Scan): string | undefined {
  const g = scan.geometry;
  if (g.kind === 'cone') return 'mass consistency is evaluated for 2D scans only';
  if (g.kind === 'fan' && !g.anglesDeg) return 'fan-beam mass consistency needs view angles to rebin (calibrated views only)';
  if (g.kind === 'fan' && !isFullScan(g)) return 'fan-beam mass consistency needs a full turn to rebin every parallel view';
  if (g.kind === 'fan' && !uniformStep(viewAngles(viewVectors(g), kernelKind(g)))) return 'fan-beam mass consistency needs evenly spaced views';
  return undefined;
}

function uniformStep(beta: Float64Array): boolean {
  const n = beta.length;
  if (n < 2) return false;
  const step = (beta[n - 1] - beta[0]) / (n - 1);
  for (let v = 1; v < n; v++) if (Math.abs(beta[v] - beta[v - 1] - step) > 1e-3 * Math.abs(step)) return false;
  return step !== 0;
}

/** Parallel views of a full-turn fan scan (same angles as the fan views), [view][channel]. */
export function rebinToParallel(scan: Scan): { angles: Float64Array; data: Float32Array } {
  const g = scan.geometry;
  const rays = rayCoordinates(g);
  const beta = viewAngles(viewVectors(g), kernelKind(g));
  const nCh = g.detector.channels, nViews = beta.length;
  const step = (beta[nViews - 1] - beta[0]) / (nViews - 1);
  const u0 = firstChannelU(g), pitch = g.detector.pitch[0];
  const out = new Float32Array(nViews * nCh);
  for (let k = 0; k < nCh; k++) {
    const shift = rays.gamma(u0 + k * pitch) / step; // fan view offset, in views
    for (let v = 0; v < nViews; v++) {
      let f = (v + shift) % nViews;
      if (f < 0) f += nViews;
      const i0 = Math.floor(f), w = f - i0;
      const i1 = (i0 + 1) % nViews;
      out[v * nCh + k] = (1 - w) * scan.data[i0 * nCh + k] + w * scan.data[i1 * nCh + k];
    }
  }
  return { angles: beta, data: out };
}

/**
 * The mass consistency report. `threshold` is the line-integral level above which an edge is
 * cut off (from the edge analysis). Throws nothing: call massUnavailable first.
 */
export function massConsistency(scan: Scan, threshold: number): MassReport {
  const g = scan.geometry;
  const nCh = g.detector.channels;
  const form = g.kind === 'parallel' ? 'parallel' : 'rebinned';
  const { angles, data } = form === 'parallel'
    ? { angles: viewAngles(viewVectors(g), kernelKind(g)), data: scan.data }
    : rebinToParallel(scan);
  const ds = channelWidthS(g);
  const nViews = angles.length;
  const totals = new Float64Array(nViews);
  const complete = new Uint8Array(nViews);
  const n = Math.min(EDGE_CHANNELS, nCh);
  for (let v = 0; v < nViews; v++) {
    let t = 0, l = 0, r = 0;
    for (let k = 0; k < nCh; k++) t += data[v * nCh + k] * ds[k];
    for (let k = 0; k < n; k++) {
      l += data[v * nCh + k];
      r += data[v * nCh + nCh - 1 - k];
    }
    totals[v] = t;
    complete[v] = l / n <= threshold && r / n <= threshold ? 1 : 0;
  }
  const full = Array.from(totals).filter((_, v) => complete[v]).sort((a, b) => a - b);
  const known = full.length >= MIN_COMPLETE_VIEWS;
  const totalMass = known ? full[full.length >> 1] : totals.reduce((x, y) => Math.max(x, y), 0);
  const missing = totals.map((t, v) => (complete[v] ? 0 : totalMass - t));
  return {
    form, angles, totals, complete, totalMass,
    basis: known ? 'complete-views' : 'lower-bound',
    completeViews: full.length,
    spread: full.length >= 2 ? (full[full.length - 1] - full[0]) / totalMass : NaN,
    missing,
  };
}
