// Known regions and the outline for cone-beam scans (FDK), slice by slice: every detector row is
// the fan scan of the slice it crosses at the axis (z = v R / D; truncation/central-row.ts) and is
// extended by the row-wise water cylinder plan (truncation/cone-extension.ts). As in 2D
// (knowledge-extension.ts) each row's tails are stretched, view by view, so that every parallel
// view of the row carries one mass, the row's mass M_r (zeroth Helgason-Ludwig condition; the
// row's tilt makes its line integrals longer by its secant, which the fits already carry). The
// knowledge sets M_r:
//   - an outline (the same cross-section in every slice): the measured mass plus the outline
//     beyond each strip filled with water (times the row's secant), as in 2D (outline-moments.ts);
//   - known regions (circles over a z slab, or masks): M_r is fitted on a few rows whose slices
//     the regions cover, from the region values of the row's fan-beam FBP (divided by the
//     secant: the slice as FDK sees it); the other rows take the fitted rows' ratio to the prior
//     mass, interpolated along z and held beyond (the tails' mass changes slowly with z).
// The stretch of a fan view's tail is the parallel-view factor at the fan angle of the tail's
// middle (as mass-targets.ts maps the 2D mass condition), applied to the kernel's water
// parameters, so the engine extends the rows as before.
import type { Workspace } from '../engine/workspace';
import { InputError, throwIfCancelled } from '../errors';
import { coneFrame } from '../geometry/cone';
import { extendDetector } from '../geometry/presets';
import { firstChannelU, firstRowV, viewVectors, VIEW_STRIDE, kernelKind } from '../geometry/view-vectors';
import { checkGrid, type ImageGrid } from '../image';
import type { MaskInputs, Outline, PlacedRegion } from '../knowledge';
import { viewAngles } from '../recon/fbp-weights';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { rowGeometry, rowScan, rowSecant } from '../truncation/central-row';
import type { ConeExtensionPlan, ConeExtensionSummary } from '../truncation/cone-extension';
import { EXTEND_CODES, EXTEND_PARAMS } from '../truncation/extend-methods';
import { extendScan } from '../truncation/extend-scan';
import { extendedLayout, maxTailChannels, type DetectorExtension } from '../truncation/extension-plan';
import { rayCoordinates } from '../truncation/ray-coords';
import { volumeOrigin, type VolumeGrid } from '../volume';
import { fitMomentsToRegions } from './fit-moments';
import { outlineBeyondStrip, outlineRaster, upperMass } from './outline-moments';
import { MIN_STRETCH } from './stretch';
import { rebinToParallelDomain, type ParallelDomain } from './parallel-domain';
import { regionValues, regionWindow, type FbpSettings } from './region-values';

/** Sampling of each row's parallel domain: coarse, the per-view masses are smooth. */
const DOMAIN_SPACING_MM = 2;
const DOMAIN_VIEWS = 180;
/** Rows on which the mass is fitted to the regions, at most. */
const FIT_ROWS = 7;

export interface ConeCompletionReport {
  base: ConeExtensionSummary;
  momentsFrom: 'known regions' | 'outline';
  /** Rows whose mass was fitted (known regions): row, z at the axis (mm), prior and fitted mass. */
  fittedRows: Array<{ row: number; z: number; prior: number; mass: number }>;
  /** Range of M_r / prior over the rows. */
  massRatio: { min: number; max: number };
  stretch: { mean: number; min: number; max: number };
  channelsAdded: { left: number; right: number };
}

export interface ConeKnowledgeInput {
  regions: PlacedRegion[];
  outline?: Outline;
  masks?: MaskInputs;
  grid: VolumeGrid;
  fbp: FbpSettings;
  muWater: number;
}

/** One detector row prepared for the mass condition. */
interface RowState {
  row: number;
  z: number;
  secant: number;
  scan: Scan;
  /** Kernel parameters of the row, one block per view. */
  params: Float32Array;
  /** Measured mass per parallel view, and the base tails' areas (left, right). */
  domain: ParallelDomain;
  m0: Float64Array;
  area: [Float64Array, Float64Array];
  /** Fan angle of each side's tail middle, radians. */
  gammaMid: [number, number];
  prior: number;
}

function rowParams(plan: ConeExtensionPlan, row: number): Float32Array {
  const out = new Float32Array(plan.views * EXTEND_PARAMS);
  for (let v = 0; v < plan.views; v++) out.set(plan.params.subarray((v * plan.rows + row) * EXTEND_PARAMS, (v * plan.rows + row + 1) * EXTEND_PARAMS), v * EXTEND_PARAMS);
  return out;
}

/** Length of a water tail from its kernel parameters [2 mu, R, d, 1/a]: a (R - d). */
const waterLength = (p: Float32Array, o: number) => (p[o] > 0 && p[o + 3] > 0 ? (p[o + 1] - p[o + 2]) / p[o + 3] : 0);

/** Median of a list (0 for none). */
function median(xs: number[]): number {
  if (!xs.length) return 0;
  const s = [...xs].sort((a, b) => a - b);
  return s[s.length >> 1];
}

async function prepareRow(ws: Workspace, scan: Scan, plan: ConeExtensionPlan, row: number, D: number, R: number): Promise<Omit<RowState, 'prior'>> {
  const g = scan.geometry;
  const rs = rowScan(scan, row);
  const rg = rs.geometry;
  const params = rowParams(plan, row);
  const { coord, geometry } = extendedLayout(rg, plan.left, plan.right);
  const extended = await extendScan(ws, rs, { left: plan.left, right: plan.right, code: EXTEND_CODES.water, params, coord, geometry });
  const domain = rebinToParallelDomain(rs, DOMAIN_SPACING_MM, DOMAIN_VIEWS);
  const wide = rebinToParallelDomain(extended, DOMAIN_SPACING_MM, DOMAIN_VIEWS);
  const n = 2 * wide.half + 1;
  const S = domain.half * domain.ds;
  const m0 = new Float64Array(DOMAIN_VIEWS), left = new Float64Array(DOMAIN_VIEWS), right = new Float64Array(DOMAIN_VIEWS);
  for (let j = 0; j < DOMAIN_VIEWS; j++) {
    for (let k = 0; k < n; k++) {
      const s = (k - wide.half) * wide.ds, p = wide.data[j * n + k] * wide.ds;
      if (s < -S - 1e-9) left[j] += p;
      else if (s > S + 1e-9) right[j] += p;
      else m0[j] += p;
    }
  }
  const rays = rayCoordinates(rg);
  const nCh = g.detector.channels, u0 = firstChannelU(rg), pitch = g.detector.pitch[0];
  const edges = [rays.s(u0), rays.s(u0 + (nCh - 1) * pitch)];
  const gammaMid = [0, 1].map((side) => {
    const lengths: number[] = [];
    for (let v = 0; v < plan.views; v++) {
      const L = waterLength(params, v * EXTEND_PARAMS + 4 * side);
      if (L > 0) lengths.push(L);
    }
    const sMid = edges[side] + (side === 0 ? -1 : 1) * (median(lengths) / 2);
    return rays.gamma(rays.u(sMid));
  }) as [number, number];
  const v = firstRowV(g) + row * g.detector.pitch[1];
  return { row, z: (v * R) / D, secant: rowSecant(g, row, D), scan: rs, params, domain, m0, area: [left, right], gammaMid };
}

/** Per parallel view: the factor by which the base tails must grow to carry mass M. */
function viewFactors(r: RowState, mass: number): Float64Array {
  return Float64Array.from(r.m0, (m, j) => {
    const A = r.area[0][j] + r.area[1][j];
    return A > 0 ? Math.max(MIN_STRETCH, (mass - m) / A) : 0;
  });
}

/** The row's kernel parameters with each fan view's tails stretched by the parallel factors. */
function stretchedParams(r: RowState, betas: Float64Array, factors: Float64Array, cap: number): Float32Array {
  const out = Float32Array.from(r.params);
  const n = factors.length, step = (2 * Math.PI) / n, theta0 = r.domain.angles[0];
  const at = (theta: number) => {
    let f = ((theta - theta0) / step) % n;
    if (f < 0) f += n;
    const j0 = Math.floor(f) % n, w = f - Math.floor(f);
    return (1 - w) * factors[j0] + w * factors[(j0 + 1) % n];
  };
  for (let v = 0; v < betas.length; v++) {
    for (const side of [0, 1] as const) {
      const o = v * EXTEND_PARAMS + 4 * side;
      if (!(out[o] > 0)) continue;
      const f = Math.min(cap, at(betas[v] - r.gammaMid[side]));
      if (f > 0) out[o + 3] /= f;
      else out[o] = 0;
    }
  }
  return out;
}

/** The plane grid of the volume and a region's coverage in slice k as a plane region. */
function sliceRegion(region: PlacedRegion, grid: VolumeGrid, k: number): PlacedRegion | null {
  const plane = grid.nx * grid.ny;
  const coverage = region.coverage.subarray(k * plane, (k + 1) * plane);
  let total = 0;
  for (const c of coverage) total += c;
  return total > 0 ? { ...region, coverage, area: total } : null;
}

const planeGrid = (g: VolumeGrid): ImageGrid => checkGrid({ nx: g.nx, ny: g.ny, dx: g.dx, dy: g.dy, cx: g.cx, cy: g.cy });

/**
 * The cone-beam extension plan for the knowledge: `base` (the water cylinder plan) with every
 * row's tails stretched to that row's mass. Reports progress and honours a cancel between rows.
 */
export async function planConeKnowledge(ws: Workspace, scan: Scan, base: ConeExtensionPlan, input: ConeKnowledgeInput, hooks: RunHooks = {}): Promise<{ plan: ConeExtensionPlan; report: ConeCompletionReport }> {
  if (base.method !== 'water') throw new InputError(`recipe extend: known regions and outlines on cone-beam scans adjust the water cylinder extension; got "${base.method}", expected water or outline`);
  const g = scan.geometry;
  const f0 = coneFrame(viewVectors(g).subarray(0, VIEW_STRIDE), 0);
  const betas = viewAngles(viewVectors(rowGeometry(g)), kernelKind(rowGeometry(g)));
  const rows: RowState[] = [];
  const raster = input.outline ? outlineRaster(input.outline, input.masks) : undefined;
  for (let r = 0; r < base.rows; r++) {
    if (r % 16 === 0) {
      await new Promise((resolve) => setTimeout(resolve, 0));
      throwIfCancelled(hooks.signal);
      hooks.onProgress?.((0.5 * r) / base.rows, 'masses of the detector rows');
    }
    const s = await prepareRow(ws, scan, base, r, f0.dist, f0.r);
    let prior: number;
    if (raster) {
      const beyond = outlineBeyondStrip(s.domain, raster);
      prior = upperMass(s.m0.map((m, j) => m + input.muWater * s.secant * beyond.area[j]));
    } else {
      prior = median(Array.from(s.m0, (m, j) => m + s.area[0][j] + s.area[1][j]));
    }
    rows.push({ ...s, prior });
  }
  const { ratio, points } = await fitRowRatios(ws, rows, base, betas, input, hooks);
  let maxFactor = 0, sum = 0, count = 0, min = Infinity;
  const stretched: Float32Array[] = [];
  for (const r of rows) {
    const factors = viewFactors(r, r.prior * ratio(r.z));
    const p = stretchedParams(r, betas, factors, STRETCH_CAP);
    for (let v = 0; v < betas.length; v++) {
      for (const side of [0, 1] as const) {
        const o = v * EXTEND_PARAMS + 4 * side;
        if (!(r.params[o] > 0)) continue;
        const f = p[o] > 0 ? r.params[o + 3] / p[o + 3] : 0;
        maxFactor = Math.max(maxFactor, f); min = Math.min(min, f); sum += f; count++;
      }
    }
    stretched.push(p);
  }
  const layout = widenedLayout(g, base, stretched);
  const params = new Float32Array(base.params.length);
  rows.forEach((r, i) => {
    for (let v = 0; v < base.views; v++) params.set(stretched[i].subarray(v * EXTEND_PARAMS, (v + 1) * EXTEND_PARAMS), (v * base.rows + r.row) * EXTEND_PARAMS);
  });
  const ratios = rows.map((r) => ratio(r.z));
  return {
    plan: { ...base, ...layout, params, geometry: extendDetector(g, layout.left, layout.right) },
    report: {
      base: base.summary,
      momentsFrom: input.regions.length ? 'known regions' : 'outline',
      fittedRows: points,
      massRatio: { min: Math.min(...ratios), max: Math.max(...ratios) },
      stretch: { mean: count ? sum / count : 1, min: count ? min : 1, max: count ? maxFactor : 1 },
      channelsAdded: { left: layout.left, right: layout.right },
    },
  };
}

/** Longest stretch of a tail: keeps a wrong region from sending tails across the gantry. */
const STRETCH_CAP = 10;

/** Channels for the longest stretched tail on each side (at most maxTailChannels), and their s. */
function widenedLayout(g: Scan['geometry'], base: ConeExtensionPlan, stretched: Float32Array[]): Pick<DetectorExtension, 'left' | 'right' | 'coord'> {
  const rg = rowGeometry(g);
  const rays = rayCoordinates(rg);
  const nCh = g.detector.channels, u0 = firstChannelU(rg), pitch = g.detector.pitch[0];
  const uLast = u0 + (nCh - 1) * pitch;
  const reach = [0, 0];
  stretched.forEach((p) => {
    for (let v = 0; v < base.views; v++) for (const side of [0, 1] as const) reach[side] = Math.max(reach[side], waterLength(p, v * EXTEND_PARAMS + 4 * side));
  });
  const limit = 0.95 * rays.sourceIsocenter;
  const cap = maxTailChannels(nCh);
  const sLeft = Math.max(-limit, rays.s(u0) - reach[0]), sRight = Math.min(limit, rays.s(uLast) + reach[1]);
  const left = Math.min(cap, Math.max(base.left, Math.ceil((u0 - rays.u(sLeft)) / pitch) + 1));
  const right = Math.min(cap, Math.max(base.right, Math.ceil((rays.u(sRight) - uLast) / pitch) + 1));
  return { left, right, coord: extendedLayout(rg, left, right).coord };
}

/**
 * M_r / prior as a function of z: 1 with no regions; else fitted on up to FIT_ROWS rows whose
 * slices the regions cover, linear in z between them and constant beyond.
 */
async function fitRowRatios(ws: Workspace, rows: RowState[], base: ConeExtensionPlan, betas: Float64Array, input: ConeKnowledgeInput, hooks: RunHooks): Promise<{ ratio: (z: number) => number; points: ConeCompletionReport['fittedRows'] }> {
  if (!input.regions.length) return { ratio: () => 1, points: [] };
  const grid = input.grid, plane = planeGrid(grid);
  const z0 = volumeOrigin(grid).z0;
  const sliceOf = (z: number) => Math.round((z - z0) / grid.dz);
  const covered = rows.filter((r) => {
    const k = sliceOf(r.z);
    return k >= 0 && k < grid.nz && input.regions.some((reg) => sliceRegion(reg, grid, k));
  });
  if (!covered.length) throw new InputError('known regions: none lies in a slice that a detector row crosses at the axis; check their z range');
  const pick = covered.length <= FIT_ROWS ? covered : Array.from({ length: FIT_ROWS }, (_, i) => covered[Math.round((i * (covered.length - 1)) / (FIT_ROWS - 1))]);
  const points: Array<{ row: number; z: number; prior: number; mass: number }> = [];
  for (const [i, r] of pick.entries()) {
    throwIfCancelled(hooks.signal);
    hooks.onProgress?.(0.5 + (0.5 * i) / pick.length, 'fit to known regions');
    const k = sliceOf(r.z);
    const inSlice = input.regions.map((reg) => sliceRegion(reg, grid, k)).filter((x): x is PlacedRegion => x !== null);
    const windows = inSlice.map((reg) => regionWindow(reg, plane));
    const rowPlan = (mass: number): DetectorExtension => {
      const p = stretchedParams(r, betas, viewFactors(r, mass), STRETCH_CAP);
      const wide = widenedLayout(r.scan.geometry, base, [p]);
      return { ...wide, code: EXTEND_CODES.water, params: p };
    };
    const evaluate = async (o: { mass: number }) => (await regionValues(ws, r.scan, rowPlan(o.mass), windows, input.fbp)).map((v) => v / r.secant);
    const fit = await fitMomentsToRegions(evaluate, inSlice.map((reg) => reg.mu), { mass: r.prior, cx: 0, cy: 0 }, input.muWater, hooks.signal, false);
    points.push({ row: r.row, z: r.z, prior: r.prior, mass: fit.moments.mass });
  }
  points.sort((a, b) => a.z - b.z);
  const ratio = (z: number) => {
    if (z <= points[0].z) return points[0].mass / points[0].prior;
    const last = points[points.length - 1];
    if (z >= last.z) return last.mass / last.prior;
    let i = 0;
    while (points[i + 1].z < z) i++;
    const a = points[i], b = points[i + 1], w = (z - a.z) / (b.z - a.z);
    return (1 - w) * (a.mass / a.prior) + w * (b.mass / b.prior);
  };
  return { ratio, points };
}
