// Planning a detector extension: tail length per view and side from the estimated reach of
// the object (edges.ts, not a constant), scaled to the mass each view misses where the mass
// consistency condition gives it (mass.ts), the number of channels to add on each side, and
// the kernel's parameter table (assembly/extend.ts).
import { paddedLength } from '../recon/filter-design';
import { extendDetector } from '../geometry/presets';
import type { Geometry } from '../geometry/types';
import { firstChannelU } from '../geometry/view-vectors';
import type { Scan } from '../scan';
import type { PerSide } from './edge-stats';
import { displacedDetectorMargin } from './displaced-margin';
import { analyseEdges, type EdgeAnalysis } from './edges';
import { EDGE_PLATEAU, EXTEND_CODES, EXTEND_DESCRIPTIONS, EXTEND_PARAMS, type ExtendMethod } from './extend-methods';
import { massConsistency, massUnavailable, type MassReport } from './mass';
import { rayCoordinates } from './ray-coords';
import { tailMassTargets } from './mass-targets';
import { tailArea, type CylinderTail } from './water-fit';

/** What the extension kernel needs (assembly/extend.ts extendViews). */
export interface DetectorExtension {
  /** Channels added before channel 0 and after the last channel. */
  left: number;
  right: number;
  /** Kernel method code. */
  code: number;
  /** EXTEND_PARAMS floats per view. */
  params: Float32Array;
  /** s of every extended channel, mm. */
  coord: Float32Array;
  /**
   * Tails given as values instead of a kernel formula: per row, the left tail's channels then the
   * right tail's (left + right floats per row). When present, `code` and `params` are unused.
   */
  table?: Float32Array;
}

export interface ExtensionSummary {
  method: ExtendMethod;
  source: string;
  channelsAdded: { left: number; right: number };
  extendedChannels: number;
  meanTailMm: { left: number; right: number };
  maxTailMm: { left: number; right: number };
  /** Tails scaled so that each view restores the object's mass (zeroth Helgason-Ludwig condition). */
  massScaledTails: number;
  massBasis: MassReport['basis'] | 'unavailable';
  muWater: number;
  muAssumed: boolean;
}

export interface ExtensionPlan extends DetectorExtension {
  method: Exclude<ExtendMethod, 'none'>;
  /** The extended detector's geometry (extendDetector). */
  geometry: Geometry;
  /** Tail length per view and side, mm in s. */
  lengths: PerSide<Float64Array>;
  summary: ExtensionSummary;
}

/**
 * Most channels a tail may add on one side of an nCh-channel detector: paddedLength(nCh) - nCh,
 * about one detector width, which keeps the extended row's FFT at twice the plain one's.
 */
export function maxTailChannels(nCh: number): number {
  return paddedLength(nCh) - nCh;
}

/** Bounds on the factor by which a tail is stretched to meet the missing mass (common practice: guard against noise). */
const MASS_SCALE_MIN = 0.5;
const MASS_SCALE_MAX = 2;

/** Extended row of a view: the mirrored measured value and the cos^2 weight give MIRROR's tail area. */
function mirrorArea(row: Float32Array, s: Float64Array, side: 0 | 1, length: number): number {
  const n = s.length;
  const edge = side === 0 ? 0 : n - 1;
  const dir = side === 0 ? 1 : -1;
  const width = Math.abs(s[1] - s[0]) || 1;
  let area = 0;
  for (let m = 1; m * width < length; m++) {
    const k = Math.min(n - 1, Math.max(0, edge + dir * m));
    area += row[k] * Math.cos((Math.PI * m * width) / (2 * length)) ** 2 * width;
  }
  return area;
}

/** Tail area of a method for edge value pe and length L (mm), in s. */
function methodArea(method: ExtendMethod, pe: number, length: number, water: CylinderTail, mirror: () => number): number {
  switch (method) {
    case 'cosine':
      return (pe * length) / 2;
    case 'edge':
      return pe * length * (EDGE_PLATEAU + (1 - EDGE_PLATEAU) / 2);
    case 'water':
      return tailArea(water);
    case 'mirror':
      return mirror();
    default:
      return 0;
  }
}

/** Tail lengths and water cylinders per view and side, after mass scaling. */
export interface TailPlan {
  lengths: PerSide<Float64Array>;
  water: PerSide<CylinderTail[]>;
  /** Tails scaled to restore a view's mass. */
  scaled: number;
}

/**
 * Tails of a 2D scan (or one detector row) by `method`: from each cut-off edge's analysed reach,
 * scaled so that the extended view restores the object's mass where `m` has complete views.
 */
export function planTails(scan: Scan, method: Exclude<ExtendMethod, 'none'>, a: EdgeAnalysis, m: MassReport | null): TailPlan {
  const nCh = a.s.length, nViews = a.nViews;
  const lengths = [Float64Array.from(a.extent[0]), Float64Array.from(a.extent[1])] as PerSide<Float64Array>;
  const water = [a.tails[0].slice(), a.tails[1].slice()] as PerSide<CylinderTail[]>;
  const pe = (side: 0 | 1, v: number) => Math.max(0, a.stats.value[side][v]);
  const row = (v: number) => scan.data.subarray(v * nCh, (v + 1) * nCh);
  // Tail area before mass scaling (water: the analysed cylinder, whose area scales with its stretch).
  const area = (side: 0 | 1, v: number, length: number) =>
    methodArea(method, pe(side, v), length, water[side][v], () => mirrorArea(row(v), a.s, side, length));

  let scaled = 0;
  if (m && m.basis === 'complete-views') {
    const areas = [0, 1].map((side) => Float64Array.from({ length: nViews }, (_, v) => (a.truncated[side][v] ? area(side as 0 | 1, v, lengths[side][v]) : 0))) as PerSide<Float64Array>;
    const targets = tailMassTargets(a, m, areas);
    for (const side of [0, 1] as const) {
      for (let v = 0; v < nViews; v++) {
        const target = targets[side][v], have = areas[side][v], L = lengths[side][v];
        if (!a.truncated[side][v] || !(target > 0) || !(have > 0)) continue;
        let c = target / have;
        if (method === 'mirror') c = solveScale((k) => area(side, v, k * L), target);
        c = Math.min(MASS_SCALE_MAX, Math.max(MASS_SCALE_MIN, c));
        lengths[side][v] = Math.min(a.maxExtent[side], c * L);
        const t = water[side][v];
        water[side][v] = { ...t, stretch: t.stretch * (lengths[side][v] / L) };
        scaled++;
      }
    }
  }
  capTails(scan.geometry, a, lengths, water);
  return { lengths, water, scaled };
}

/**
 * Caps tails at maxTailChannels(nCh) channels, so that the FFT of an extended row is at most
 * twice as long as a plain row's (fbp.ts and fdk.ts pad to 2 (max(left, right) + channels) - 1);
 * a longer tail is compressed to fit (water: stretched), the mass scaling still holding to
 * within the cap.
 */
function capTails(g: Geometry, a: EdgeAnalysis, lengths: PerSide<Float64Array>, water: PerSide<CylinderTail[]>): void {
  const nCh = a.s.length;
  const u0 = firstChannelU(g), pitch = g.detector.pitch[0];
  const uLast = u0 + (nCh - 1) * pitch;
  const capChannels = maxTailChannels(nCh);
  const capS = [
    Math.abs(a.s[0] - a.rays.s(u0 - (capChannels - 1) * pitch)),
    Math.abs(a.rays.s(uLast + (capChannels - 1) * pitch) - a.s[nCh - 1]),
  ];
  for (const side of [0, 1] as const) {
    for (let v = 0; v < a.nViews; v++) {
      const L = lengths[side][v];
      if (!(L > capS[side])) continue;
      lengths[side][v] = capS[side];
      const t = water[side][v];
      water[side][v] = { ...t, stretch: t.stretch * (capS[side] / L) };
    }
  }
}

/** The kernel's parameters (EXTEND_PARAMS floats per view) for the tails, written into `out` from view 0 of `stride` views apart (1: consecutive). */
export function tailParams(method: Exclude<ExtendMethod, 'none'>, a: EdgeAnalysis, t: TailPlan, out = new Float32Array(a.nViews * EXTEND_PARAMS), stride = 1, first = 0): Float32Array {
  for (let v = 0; v < a.nViews; v++) {
    for (const side of [0, 1] as const) {
      if (!a.truncated[side][v]) continue;
      const o = ((first + v * stride) * EXTEND_PARAMS) + 4 * side, L = t.lengths[side][v], p = Math.max(0, a.stats.value[side][v]);
      if (method === 'water') {
        const w = t.water[side][v];
        out.set([2 * w.mu, w.radius, w.inset, w.stretch > 0 ? 1 / w.stretch : 0], o);
      } else if (method === 'edge') out.set([p, L, EDGE_PLATEAU * L, 0], o);
      else if (method === 'cosine') out.set([p, L, 0, 0], o);
      else out.set([0, L, 0, 0], o);
    }
  }
  return out;
}

/** Longest tail on each side, mm in s. */
export function longestTails(t: TailPlan): PerSide<number> {
  return [0, 1].map((side) => t.lengths[side].reduce((x, y) => Math.max(x, y), 0)) as PerSide<number>;
}

/**
 * Channels to add on each side: enough for the longest tail (`reach`, mm in s; at most
 * maxTailChannels) and for a displaced detector's short side to mirror its long one.
 */
export function channelsForReach(g: Geometry, a: EdgeAnalysis, reach: PerSide<number>): { left: number; right: number } {
  const nCh = g.detector.channels;
  const u0 = firstChannelU(g), pitch = g.detector.pitch[0];
  const uLast = u0 + (nCh - 1) * pitch;
  const margin = displacedDetectorMargin(g);
  const tail = (n: number) => Math.min(maxTailChannels(nCh), n);
  return {
    left: Math.max(margin.left, reach[0] > 0 ? tail(Math.ceil((u0 - a.rays.u(a.s[0] - reach[0])) / pitch) + 1) : 0),
    right: Math.max(margin.right, reach[1] > 0 ? tail(Math.ceil((a.rays.u(a.s[nCh - 1] + reach[1]) - uLast) / pitch) + 1) : 0),
  };
}

/** Mean tail length over the cut-off views of each side, and the longest, mm. */
export function tailStats(truncated: PerSide<Uint8Array>, lengths: PerSide<Float64Array>): { mean: PerSide<number>; max: PerSide<number> } {
  const mean = [0, 0] as PerSide<number>, max = [0, 0] as PerSide<number>;
  for (const side of [0, 1] as const) {
    let sum = 0, n = 0;
    for (let v = 0; v < lengths[side].length; v++) {
      max[side] = Math.max(max[side], lengths[side][v]);
      if (truncated[side][v]) { sum += lengths[side][v]; n++; }
    }
    mean[side] = n ? sum / n : 0;
  }
  return { mean, max };
}

/**
 * Plans the extension of a 2D scan by `method`. `analysis` and `mass` may be passed when already
 * computed. Tails start at each cut-off edge's least-squares edge value (continuity) and end at
 * the estimated object boundary; a side that is not cut off gets no tail.
 */
export function planExtension(scan: Scan, method: Exclude<ExtendMethod, 'none'>, analysis?: EdgeAnalysis, mass?: MassReport | null): ExtensionPlan {
  const a = analysis ?? analyseEdges(scan);
  const g = scan.geometry;
  const m = mass === undefined ? (massUnavailable(scan) || !mayHaveCompleteViews(a) ? null : massConsistency(scan, a.threshold)) : mass;
  const tails = planTails(scan, method, a, m);
  const { left, right } = channelsForReach(g, a, longestTails(tails));
  const { geometry, coord } = extendedLayout(g, left, right);
  const { mean, max } = tailStats(a.truncated, tails.lengths);
  return {
    method, left, right, code: EXTEND_CODES[method], params: tailParams(method, a, tails), coord, geometry, lengths: tails.lengths,
    summary: {
      method, source: EXTEND_DESCRIPTIONS[method],
      channelsAdded: { left, right }, extendedChannels: coord.length,
      meanTailMm: { left: mean[0], right: mean[1] }, maxTailMm: { left: max[0], right: max[1] },
      massScaledTails: tails.scaled, massBasis: m ? m.basis : 'unavailable',
      muWater: a.mu, muAssumed: a.muAssumed,
    },
  };
}

/** The extended detector and the s coordinate of each of its channels. */
export function extendedLayout(g: Geometry, left: number, right: number): { geometry: Geometry; coord: Float32Array } {
  const rays = rayCoordinates(g);
  const u0 = firstChannelU(g), pitch = g.detector.pitch[0];
  const coord = new Float32Array(left + g.detector.channels + right);
  for (let j = 0; j < coord.length; j++) coord[j] = rays.s(u0 + (j - left) * pitch);
  return { geometry: extendDetector(g, left, right), coord };
}

/**
 * The extension FBP needs without any extrapolation ('none'): zero channels on a displaced
 * detector's short side (displaced-margin.ts), or undefined when none are needed.
 */
export function zeroExtension(scan: Scan): DetectorExtension | undefined {
  const { left, right } = displacedDetectorMargin(scan.geometry);
  if (!left && !right) return undefined;
  const nViews = scan.data.length / scan.geometry.detector.channels;
  return { left, right, code: EXTEND_CODES.none, params: new Float32Array(nViews * EXTEND_PARAMS), coord: extendedLayout(scan.geometry, left, right).coord };
}

/**
 * A (rebinned) view is complete only if some view is uncut on the left and some on the right;
 * when not, the mass is unknown (a lower bound) and the consistency step is skipped.
 */
function mayHaveCompleteViews(a: EdgeAnalysis): boolean {
  return a.truncated[0].some((t) => !t) && a.truncated[1].some((t) => !t);
}

/** The factor c in [MASS_SCALE_MIN, MASS_SCALE_MAX] with areaOf(c) = target (bisection; areaOf increasing). */
function solveScale(areaOf: (c: number) => number, target: number): number {
  let lo = MASS_SCALE_MIN, hi = MASS_SCALE_MAX;
  if (areaOf(hi) <= target) return hi;
  if (areaOf(lo) >= target) return lo;
  for (let i = 0; i < 30; i++) {
    const mid = (lo + hi) / 2;
    if (areaOf(mid) < target) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}
