// Finite Hilbert inversion on one chord (chord-solve.ts, coupled-solve.ts with a single chord):
// a profile recovered from its Hilbert transform on a truncated interval plus the mean of a known
// subinterval (Kudo, Courdurier, Noo & Defrise 2008, REFERENCES.md [kudo2008]: the interior is
// determined), or from its Hilbert transform over its whole support plus its integral (Noo,
// Clackdoyle & Pack 2004, [noo2004]). The exact Hilbert transform of a piecewise-constant profile
// is elementary: a piece of value v on [a, b] gives (v/pi) ln|(t - a)/(t - b)| (derived).
import { describe, expect, it } from 'vitest';
import { exteriorPull, hilbertRow } from '../../web/core/dbp/chord-solve';
import { layoutChord, type ChordFamily } from '../../web/core/dbp/chords';
import { solveCoupled } from '../../web/core/dbp/coupled-solve';
import { localWorkspace } from '../helpers/engine';

/** Body, two soft inserts, a dense rod and a low-density pocket; edges off the node grid. */
const pieces: Array<[number, number, number]> = [
  [-150.3, 149.7, 0.02], [-120.3, -40.1, -0.015], [30.2, 110.3, -0.015], [-5.1, 25.3, 0.003], [-100.35, -90.2, 0.04], [50.2, 58.4, 0.02], [12.3, 16.1, 0.02],
];
const f = (t: number) => pieces.reduce((s, [a, b, v]) => s + (t >= a && t < b ? v : 0), 0);
const H = (t: number) => pieces.reduce((s, [a, b, v]) => s + (v / Math.PI) * Math.log(Math.abs((t - a) / (t - b))), 0);
const integral = pieces.reduce((s, [a, b, v]) => s + v * (b - a), 0);
const coupling = { across: 0, along: 0.01, edge: 0.0005, passes: 3, tolerance: 1e-7, maxIterations: 500 };

/** The error over inside nodes, optionally only beyond `from` mm; `exterior`: an estimate of the profile outside the field of view and its weight. */
async function invert(fov: number, support: [number, number], known?: [number, number], exterior?: { of: (t: number) => number; weight: number }, from = -Infinity) {
  const c = layoutChord(0, 0, 1, 0, { step: 0.8, fovRadius: fov, support: () => support })!;
  const family: ChordFamily = { cx: 0, cy: 0, count: 1, step: 0.8, chords: [c] };
  const coef = new Float64Array(c.nodes.length);
  let n = 0, mean = 0;
  if (known) {
    for (let j = c.inside0; j < c.inside1; j++) if (c.nodes[j] >= known[0] && c.nodes[j] <= known[1]) { coef[j] = 1; n++; mean += f(c.nodes[j]); }
    coef.forEach((v, j) => { coef[j] = v / n; });
  }
  const ws = await localWorkspace(1);
  const { profiles } = await solveCoupled(ws, family, () => ({
    nodes: c.nodes, at: c.at, hilbert: c.at.map(H), lineIntegral: integral, lineWeight: 0.3,
    equations: known ? [{ coef, target: mean / n, weight: 30 }] : [], smoothOutside: 0.01, inside0: c.inside0, inside1: c.inside1,
    exterior: exterior && { values: c.nodes.map(exterior.of), weight: exterior.weight },
  }), coupling);
  // RMS error over inside nodes at least 2 mm from every edge, in units of the body value.
  let e = 0, m = 0;
  for (let j = c.inside0; j < c.inside1; j++) {
    const t = c.nodes[j];
    if (t < from || pieces.some(([a, b]) => Math.abs(t - a) < 2 || Math.abs(t - b) < 2)) continue;
    e += (profiles[0][j] - f(t)) ** 2;
    m++;
  }
  return Math.sqrt(e / m) / 0.02;
}

describe('finite Hilbert inversion on a chord', () => {
  it('the Hilbert row of a constant profile is the interval formula', () => {
    // hilbertRow sums linear pieces; for equal node values it must reduce to (1/pi) ln|(t-a)/(t-b)|.
    const nodes = Float64Array.from([-3, -1, 0.5, 2, 4]);
    const row = new Float64Array(nodes.length);
    for (const t of [-7.3, -2.2, 0.1, 1.3, 3.9, 9]) {
      hilbertRow(nodes, t, row);
      const sum = row.reduce((s, v) => s + v, 0);
      expect(sum).toBeCloseTo(Math.log(Math.abs((t + 3) / (t - 4))) / Math.PI, 12);
    }
  });
  it('complete data: the whole support inside, plus the integral', async () => {
    // Full data is well posed (Noo et al. 2004); measured 1.3% of the body value.
    expect(await invert(160, [-160, 160])).toBeLessThan(0.03);
  });
  it('truncated data plus the mean of a known interval', async () => {
    // Interior problem, field of view [-60, 60] inside a 300 mm profile, known mean over
    // [-4, 4]: determined (Kudo et al. 2008); measured 1.2% of the body value.
    const withKnown = await invert(60, [-151, 151], [-4, 4]);
    expect(withKnown).toBeLessThan(0.03);
    // Without it the interior is not determined: the same solver is far off (measured 12%).
    const without = await invert(60, [-151, 151]);
    expect(without).toBeGreaterThan(5 * withKnown);
  });
  it('a known region at one edge of the field: an exterior estimate steadies the far side', async () => {
    // The known interval [-56, -48] sits at the left edge of the field [-60, 60]: the far side
    // drifts (the interior problem's stability fades with the distance to the known interval,
    // Courdurier et al. 2008, REFERENCES.md [courdurier2008]). Drawing the profile outside the
    // field toward an estimate of it settles much of that drift; an outside check against the
    // exact profile on [20, 60].
    const known: [number, number] = [-56, -48];
    const far = 20;
    const smoothOnly = await invert(60, [-151, 151], known, undefined, far);
    // A crude estimate (the body value everywhere, the inserts outside the field smeared out, as
    // a water-cylinder tail gives): measured 2.6% against 5.6% of the body value.
    const crude = await invert(60, [-151, 151], known, { of: (t) => (Math.abs(t) < 149.7 ? 0.02 : 0), weight: 1e-4 }, far);
    expect(crude).toBeLessThan(0.6 * smoothOnly);
    // The exact exterior: close to what complete data give (1.3%, above); measured 2.1%.
    const exact = await invert(60, [-151, 151], known, { of: f, weight: 1e-4 }, far);
    expect(exact).toBeLessThan(0.03);
  });
});

describe('the pull toward an exterior estimate', () => {
  it('is the lumped quadrature of weight * int (f - g)^2 outside the field of view, and nothing inside', () => {
    // Nodes every 1 mm on [-10, 10], nodes -4..4 inside the field of view: the exterior nodes
    // stand for 5.5 mm on each side (each node for half of its neighbouring intervals, lumped-mass
    // quadrature, common practice; the half interval next to the field goes with the inside node).
    const nodes = Float64Array.from({ length: 21 }, (_, j) => j - 10);
    const values = nodes.map((t) => 0.01 * t);
    const problem = { nodes, at: new Float64Array(0), hilbert: new Float64Array(0), lineWeight: 0, equations: [], smoothOutside: 0, inside0: 6, inside1: 15, exterior: { values, weight: 2 } };
    const diag = new Float64Array(21), rhs = new Float64Array(21);
    exteriorPull(problem, diag, rhs);
    expect(diag.slice(6, 15).every((v) => v === 0)).toBe(true);
    expect(rhs.slice(6, 15).every((v) => v === 0)).toBe(true);
    expect(diag.reduce((s, v) => s + v, 0)).toBeCloseTo(2 * 11, 12);
    // Alone, the pull's minimizer is the estimate itself on every exterior node.
    for (let j = 0; j < 21; j++) if (diag[j] > 0) expect(rhs[j] / diag[j]).toBeCloseTo(values[j], 12);
  });
});
