// The mass each tail should carry so that the extended data satisfy the zeroth
// Helgason-Ludwig condition (REFERENCES.md [helgason-ludwig]: "the tail amplitude and length can be
// scaled so each view restores M_total").
//
// Parallel beams: view v misses D(v) = M - sum_k p_k ds_k, shared between its two tails in
// proportion to their extrapolated areas A_L, A_R.
// Fan beams (rebinned, mass.ts): the right tail of fan view beta holds rays of parallel views
// theta = beta - gamma for gamma beyond the right edge; with gR the fan angle in the middle of
// the right tails, it carries the right-hand share of D at theta = beta - gR, and the left tail
// of the view at theta + gL is the other share (gL < 0 for the left side):
//   D_R(beta) = D(beta - gR) A_R(beta) / (A_R(beta) + A_L(beta - gR + gL)).
// This is the parallel rule evaluated along the rebinning map (exact for gR = gL = 0).
import type { PerSide } from './edge-stats';
import type { EdgeAnalysis } from './edges';
import type { MassReport } from './mass';

/** Linear interpolation of per-view values at an angle (radians) over evenly spaced views of a full turn. */
function circularAt(values: Float64Array, angles: Float64Array, angle: number): number {
  const n = values.length;
  const step = (angles[n - 1] - angles[0]) / (n - 1);
  let f = ((angle - angles[0]) / step) % n;
  if (f < 0) f += n;
  const i0 = Math.floor(f), w = f - i0;
  return (1 - w) * values[i0] + w * values[(i0 + 1) % n];
}

function median(xs: number[]): number {
  if (!xs.length) return 0;
  const s = [...xs].sort((a, b) => a - b);
  return s[s.length >> 1];
}

/**
 * Target tail areas per view and side (mm, line integral x mm), given each tail's
 * extrapolated area `areas` before scaling. Views that miss nothing get 0.
 */
export function tailMassTargets(a: EdgeAnalysis, m: MassReport, areas: PerSide<Float64Array>): PerSide<Float64Array> {
  const n = a.nViews;
  const out = [new Float64Array(n), new Float64Array(n)] as PerSide<Float64Array>;
  if (m.form === 'parallel') {
    for (let v = 0; v < n; v++) {
      const total = areas[0][v] + areas[1][v];
      if (!(m.missing[v] > 0) || !(total > 0)) continue;
      out[0][v] = (m.missing[v] * areas[0][v]) / total;
      out[1][v] = (m.missing[v] * areas[1][v]) / total;
    }
    return out;
  }
  // Fan angle in the middle of each side's tails.
  const gammaMid = [0, 1].map((side) => {
    const lengths = Array.from(a.extent[side]).filter((_, v) => a.truncated[side][v]);
    const edge = side === 0 ? a.s[0] : a.s[a.s.length - 1];
    const sMid = edge + (side === 0 ? -1 : 1) * median(lengths) / 2;
    return a.rays.gamma(a.rays.u(sMid));
  });
  const deficit = Float64Array.from(m.missing, (x) => Math.max(0, x));
  for (let v = 0; v < n; v++) {
    const beta = m.angles[v];
    for (const side of [0, 1] as const) {
      const other = (1 - side) as 0 | 1;
      const theta = beta - gammaMid[side];
      const d = circularAt(deficit, m.angles, theta);
      const mine = areas[side][v];
      const theirs = circularAt(areas[other], m.angles, theta + gammaMid[other]);
      if (d > 0 && mine > 0) out[side][v] = (d * mine) / (mine + theirs);
    }
  }
  return out;
}
