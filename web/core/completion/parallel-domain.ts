// The measured data of a 2D scan as parallel-beam views over a full turn, on a uniform grid of
// the ray coordinate s (mm): the domain where the Helgason-Ludwig conditions are plain per-view
// statements (REFERENCES.md [helgason-ludwig]) and where detector tails are designed before they
// are sampled back onto the scan's own (fan or parallel) extended detector.
//
// Rebinning (Kak & Slaney chapter 3.4, REFERENCES.md [fan-fbp], in this project's convention): the fan ray of view beta
// at fan angle gamma is the parallel ray of view theta = beta - gamma at s = R sin(gamma). The
// same line, walked the other way, is the parallel ray (theta + pi, -s), measured by the fan view
// beta' = theta + pi - gamma at fan angle -gamma; either one may be the view that measured it
// (a short scan or an offset detector measures some lines only once).
import { InputError } from '../errors';
import type { Geometry } from '../geometry/types';
import { validateGeometry } from '../geometry/validate';
import { firstChannelU, fovRadius, kernelKind, viewVectors } from '../geometry/view-vectors';
import { viewAngles } from '../recon/fbp-weights';
import type { Scan } from '../scan';
import { rayCoordinates, type RayCoordinates } from '../truncation/ray-coords';

export interface ParallelDomain {
  /** Angle of parallel view j, radians: theta_0 + j 2 pi / nViews. */
  angles: Float64Array;
  nViews: number;
  /** Channel spacing in s, mm; channel k lies at s = (k - half) ds. */
  ds: number;
  /** Channels on each side of the centre channel: the measured range is |s| <= half ds. */
  half: number;
  /** Radius of the measured field of view, mm (every line closer to the isocentre was measured). */
  fov: number;
  /** Measured line integrals, [view][channel], 2 half + 1 channels per view. */
  data: Float32Array;
}

/** Where an angle falls among the (unwrapped, monotonic) angles of the scan's views. */
interface AngleLookup {
  locate(beta: number): { i0: number; i1: number; w: number } | null;
}

function angleLookup(beta: Float64Array, fullTurn: boolean): AngleLookup {
  const n = beta.length;
  const rising = beta[n - 1] >= beta[0];
  const b = rising ? beta : Float64Array.from(beta).reverse();
  const index = (i: number) => (rising ? i : n - 1 - i);
  const lo = b[0], hi = b[n - 1];
  const turn = 2 * Math.PI;
  return {
    locate(angle: number) {
      let a = angle;
      if (fullTurn) {
        a = lo + ((((a - lo) % turn) + turn) % turn);
        if (a > hi) {
          // Between the last view and the first view one turn later.
          const gap = lo + turn - hi;
          return { i0: index(n - 1), i1: index(0), w: (a - hi) / gap };
        }
      } else {
        // Bring the angle into [lo, lo + 2 pi) and check it lies within the scanned arc.
        a = lo + ((((a - lo) % turn) + turn) % turn);
        if (a > hi) return null;
      }
      let l = 0, r = n - 1;
      while (r - l > 1) {
        const m = (l + r) >> 1;
        if (b[m] <= a) l = m;
        else r = m;
      }
      const span = b[r] - b[l];
      return { i0: index(l), i1: index(r), w: span > 0 ? (a - b[l]) / span : 0 };
    },
  };
}

/** The scan's geometry facts the rebinning needs. */
interface ScanRays {
  g: Geometry;
  rays: RayCoordinates;
  beta: Float64Array;
  nCh: number;
  u0: number;
  pitch: number;
  lookup: AngleLookup;
}

function scanRays(g: Geometry, fullTurn: boolean): ScanRays {
  const beta = viewAngles(viewVectors(g), kernelKind(g));
  return { g, rays: rayCoordinates(g), beta, nCh: g.detector.channels, u0: firstChannelU(g), pitch: g.detector.pitch[0], lookup: angleLookup(beta, fullTurn) };
}

/** The measured line integral of parallel line (theta, s), or NaN when no view measured it. */
function lineValue(r: ScanRays, data: Float32Array, theta: number, s: number): number {
  for (const [sign, shift] of [[1, 0], [-1, Math.PI]] as const) {
    const u = r.rays.u(sign * s);
    const f = (u - r.u0) / r.pitch;
    if (!(f >= 0 && f <= r.nCh - 1)) continue;
    const at = r.lookup.locate(theta + shift + r.rays.gamma(u));
    if (!at) continue;
    const k0 = Math.min(r.nCh - 2, Math.floor(f)), wk = f - k0;
    const row = (v: number) => (1 - wk) * data[v * r.nCh + k0] + wk * data[v * r.nCh + k0 + 1];
    return (1 - at.w) * row(at.i0) + at.w * row(at.i1);
  }
  return NaN;
}

/**
 * Rebins a 2D scan (parallel or fan, flat or curved detector, full turn or short scan) to
 * parallel views over a full turn, with as many views per turn as the scan has per its angular
 * step (or `viewsPerTurn`), and s spaced like the scan's central channels (or `spacing` mm).
 */
export function rebinToParallelDomain(scan: Scan, spacing?: number, viewsPerTurn?: number): ParallelDomain {
  const g = scan.geometry;
  if (g.kind === 'cone' || g.detector.rows !== 1) throw new InputError('knowledge in FBP: the scan must be a 2D (single-row) scan here; cone-beam rows are handled one by one');
  const fov = fovRadius(g);
  if (!(fov > 0)) throw new InputError('knowledge in FBP: the scan does not measure the line through the isocentre, so it has no field of view to correct');
  const fullTurn = isFullTurn(g);
  const r = scanRays(g, fullTurn);
  const span = Math.abs(r.beta[r.beta.length - 1] - r.beta[0]);
  const step = span / Math.max(1, r.beta.length - 1);
  if (!(step > 0)) throw new InputError('knowledge in FBP: the scan needs views at more than one angle');
  const nViews = viewsPerTurn ?? Math.max(8, Math.round((2 * Math.PI) / step));
  const ds = spacing ?? Math.abs(r.rays.dsdu(0)) * r.pitch;
  // The measured range reaches the outermost channel centres (the FOV radius counts the channels' outer halves).
  const sFirst = Math.abs(r.rays.s(r.u0)), sLast = Math.abs(r.rays.s(r.u0 + (r.nCh - 1) * r.pitch));
  const reach = Math.min(fov, fullTurn ? Math.max(sFirst, sLast) : Math.min(sFirst, sLast));
  const half = Math.max(1, Math.floor(reach / ds - 1e-6));
  const n = 2 * half + 1;
  const angles = Float64Array.from({ length: nViews }, (_, j) => r.beta[0] + (j * 2 * Math.PI) / nViews);
  const data = new Float32Array(nViews * n);
  let missing = 0;
  for (let j = 0; j < nViews; j++) {
    for (let k = 0; k < n; k++) {
      const v = lineValue(r, scan.data, angles[j], (k - half) * ds);
      if (Number.isNaN(v)) missing++;
      data[j * n + k] = Number.isNaN(v) ? 0 : v;
    }
  }
  if (missing > 0.01 * data.length) {
    throw new InputError(`knowledge in FBP: ${((100 * missing) / data.length).toFixed(0)}% of the lines through the field of view were never measured (the scan covers ${((span * 180) / Math.PI).toFixed(0)} degrees); known regions and outlines need at least a short scan (180 degrees plus the fan)`);
  }
  return { angles, nViews, ds, half, fov: half * ds, data };
}

/** True when the views cover a full turn (within two steps): evenly or not. */
function isFullTurn(g: Geometry): boolean {
  const beta = viewAngles(viewVectors(g), kernelKind(g));
  const n = beta.length;
  if (n < 2) return false;
  const span = Math.abs(beta[n - 1] - beta[0]);
  return span + (2 * span) / (n - 1) >= 2 * Math.PI;
}

/** The domain as a parallel-beam scan over a full turn (for the detector extension planner). */
export function parallelScan(pd: ParallelDomain, muWater?: number): Scan {
  const geometry = validateGeometry({
    kind: 'parallel',
    detector: { shape: 'flat', channels: 2 * pd.half + 1, rows: 1, pitch: [pd.ds, pd.ds], offset: [0, 0] },
    anglesDeg: { start: (pd.angles[0] * 180) / Math.PI, step: 360 / pd.nViews, count: pd.nViews },
  });
  return { geometry, data: pd.data, muWater };
}
