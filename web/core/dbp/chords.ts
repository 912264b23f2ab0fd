// Chords for finite Hilbert inversion: lines through one centre (a known region's), one per
// direction over a half turn, so that every point of the field of view lies on a chord that
// crosses the known region (Kudo, Courdurier, Noo & Defrise 2008, REFERENCES.md [kudo2008]).
// Along each chord: nodes of a piecewise-linear profile (at t = k step inside the field of view,
// the same t on every chord, then spacing that grows outside up to the object's support), and
// the DBP sample points midway between inside nodes.

/** Where a chord meets a region: [t0, t1] along it (mm from the chord's centre). */
export type Interval = [number, number];

export interface ChordLayout {
  /** Direction of the chord (the centre is the family's). */
  ex: number;
  ey: number;
  /** Profile nodes, mm along the chord, increasing. */
  nodes: Float64Array;
  /** Nodes [inside0, inside1) are inside the field of view, at t = (k0 + i) step. */
  inside0: number;
  inside1: number;
  k0: number;
  /** DBP sample positions along the chord (midway between inside nodes, clear of the FOV edge). */
  at: Float64Array;
}

export interface ChordFamily {
  /** The point every chord passes through, mm. */
  cx: number;
  cy: number;
  /** Chord m has direction angle m * pi / count. */
  count: number;
  step: number;
  chords: ChordLayout[];
}

export interface FamilyOptions {
  /** Node spacing inside the field of view, mm. */
  step: number;
  /** FOV radius about the isocentre, mm. */
  fovRadius: number;
  /** Where the object may lie along a chord through (cx, cy) with direction (ex, ey). */
  support: (ex: number, ey: number) => Interval;
}

/** Spacing of the nodes outside the field of view grows by this factor per node... */
const GROWTH = 1.2;
/** ...up to this many inside steps. */
const MAX_SPACING_STEPS = 10;
/** DBP samples keep this share of a step from the FOV edge (the DBP needs every line through a point). */
const EDGE_MARGIN_STEPS = 0.5;

/** The interval of t where |c + t e| <= r (a disk about the isocentre), or null. */
export function diskInterval(cx: number, cy: number, ex: number, ey: number, r: number): Interval | null {
  const b = cx * ex + cy * ey, c = cx * cx + cy * cy - r * r;
  const disc = b * b - c;
  if (disc <= 0) return null;
  const s = Math.sqrt(disc);
  return [-b - s, -b + s];
}

/** Nodes stepping outward from `from` to `to` with growing spacing (excluding `from`). */
function outward(from: number, to: number, step: number): number[] {
  const out: number[] = [];
  const dir = Math.sign(to - from);
  let t = from, w = step;
  while (dir * (to - t) > 1e-9) {
    w = Math.min(w * GROWTH, MAX_SPACING_STEPS * step);
    t = dir > 0 ? Math.min(to, t + w) : Math.max(to, t - w);
    out.push(t);
  }
  return out;
}

/** One chord of a family through (cx, cy), or null when it misses the field of view. */
export function layoutChord(cx: number, cy: number, ex: number, ey: number, o: FamilyOptions): ChordLayout | null {
  const fov = diskInterval(cx, cy, ex, ey, o.fovRadius);
  if (!fov) return null;
  const h = o.step;
  const k0 = Math.ceil(fov[0] / h), k1 = Math.floor(fov[1] / h);
  if (k1 - k0 < 2) return null;
  const support = o.support(ex, ey);
  const left = outward(k0 * h, Math.min(support[0], k0 * h), h).reverse();
  const right = outward(k1 * h, Math.max(support[1], k1 * h), h);
  const nInside = k1 - k0 + 1;
  const nodes = new Float64Array(left.length + nInside + right.length);
  nodes.set(left);
  for (let k = 0; k < nInside; k++) nodes[left.length + k] = (k0 + k) * h;
  nodes.set(right, left.length + nInside);
  const inner = diskInterval(cx, cy, ex, ey, o.fovRadius - EDGE_MARGIN_STEPS * h);
  const at: number[] = [];
  if (inner) {
    for (let k = k0; k < k1; k++) {
      const t = (k + 0.5) * h;
      if (t >= inner[0] && t <= inner[1]) at.push(t);
    }
  }
  return { ex, ey, nodes, inside0: left.length, inside1: left.length + nInside, k0, at: Float64Array.from(at) };
}

/**
 * The family of chords through (cx, cy): enough directions that neighbouring chords are at most
 * one step apart anywhere in the field of view.
 */
export function chordFamily(cx: number, cy: number, o: FamilyOptions): ChordFamily {
  const count = Math.max(8, Math.ceil((Math.PI * (Math.hypot(cx, cy) + o.fovRadius)) / o.step));
  const chords: ChordLayout[] = [];
  for (let m = 0; m < count; m++) {
    const psi = (m * Math.PI) / count;
    const c = layoutChord(cx, cy, Math.cos(psi), Math.sin(psi), o);
    if (!c) throw new Error(`chord ${m} through (${cx}, ${cy}) misses the field of view: the centre must lie inside it`);
    chords.push(c);
  }
  return { cx, cy, count, step: o.step, chords };
}

/** The DBP sample points of a family: (x, y, ex, ey) per sample, chord after chord. */
export function samplePoints(f: ChordFamily): Float32Array {
  const n = f.chords.reduce((s, c) => s + c.at.length, 0);
  const out = new Float32Array(4 * n);
  let q = 0;
  for (const c of f.chords) {
    for (const t of c.at) {
      out[q++] = f.cx + t * c.ex;
      out[q++] = f.cy + t * c.ey;
      out[q++] = c.ex;
      out[q++] = c.ey;
    }
  }
  return out;
}
