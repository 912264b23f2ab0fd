// The analytic route for truncated scans: differentiated backprojection (DBP) and finite
// Hilbert inversion on chords (Noo, Clackdoyle & Pack 2004, REFERENCES.md [noo2004]), with the
// user's knowledge where the chords need it (known regions: Kudo, Courdurier, Noo & Defrise
// 2008, [kudo2008]; the outline as support: Defrise, Noo, Clackdoyle & Kudo 2006, [defrise2006]).
//   1. the weighted ray derivatives (derivative.ts) and their backprojection at points along
//      chords through a known region (dbp-points.ts): the Hilbert transform along each chord;
//   2. per chord, the normal equations of the profile (chord-solve.ts) from those values, the
//      chord's measured line integral and the known regions' means (chord-knowledge.ts), and
//      outside the field of view the outline as the support, or without one, an estimate of
//      the object from the known regions (exterior.ts);
//   3. all chords solved together (coupled-solve.ts) and drawn on the grid (chord-image.ts).
// DBP needs every line through a point: only the measured field of view is reconstructed. The
// rest of the grid is not determined: it is set to 0 (air) and reported as a mask, never given a
// number that looks like a measurement.
import type { Workspace } from '../engine/workspace';
import { InputError } from '../errors';
import { fovRadius, kernelKind, viewVectors } from '../geometry/view-vectors';
import type { Image2D, ImageGrid } from '../image';
import { placeKnowledge, type MaskInputs, type PlacedKnowledge } from '../knowledge';
import { chooseGrid } from '../recipe/grid';
import type { Recipe } from '../recipe/recipe';
import { fbp2d } from '../recon/fbp';
import { require2d } from '../recon/projector';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { analyseEdges, objectRadius, type EdgeAnalysis } from '../truncation/edges';
import { planExtension } from '../truncation/extension-plan';
import { chordImage } from './chord-image';
import { centreRegion, knownMeans } from './chord-knowledge';
import type { ChordProblem } from './chord-solve';
import { diskSupport, outlineSupport, type SupportFn } from './chord-support';
import { chordFamily, samplePoints } from './chords';
import { solveCoupled, type CouplingOptions } from './coupled-solve';
import { dbpAtPoints } from './dbp-points';
import { dbpDerivative } from './derivative';
import { exteriorFromKnownRegions } from './exterior';
import { dbpReport, type DbpDecision } from './report';
import { chordLineIntegral, sinogramView } from './line-integral';

/** Nodes across the field of view at most (the chord step grows for larger fields). */
export const MAX_NODES_ACROSS = 192;
/** Weight of a chord's line-integral equation against one Hilbert sample. */
const LINE_WEIGHT = 0.3;
/** Slope penalty on the profile outside the field of view. */
const SMOOTH_OUTSIDE = 0.01;
/** Default coupling; `edge` is a share of mu_water (25 HU). */
export const DEFAULT_COUPLING: Omit<CouplingOptions, 'edge'> & { edgeHu: number } = {
  across: 0.01, along: 0.1, edgeHu: 25, passes: 3, tolerance: 1e-4, maxIterations: 300,
};
/** Margin of the estimated object's reach when no outline is given. */
const REACH_MARGIN = 1.1;

export interface DbpResult {
  image: Image2D;
  /** 1 where the pixel is not determined (outside the field of view, or on a chord no knowledge reaches). */
  undetermined: Uint8Array;
  warnings: string[];
  report: Record<string, unknown>;
}

/** Where the chords pass, where the object may lie, and why: from the knowledge and the data. */
function decide(placed: PlacedKnowledge, recipe: Recipe, fov: number, reach: number, truncatedViews: number, grid: Image2D['grid']): DbpDecision & { support: SupportFn } {
  const regions = placed.regions;
  if (!regions.length) {
    if (truncatedViews > 0) {
      const outline = recipe.knowledge?.outline ? '; an outline alone does not settle it: it bounds the object, but inside a wider object the data still allow a smooth change of the whole field of view' : '';
      throw new InputError(`dbp: ${truncatedViews} views are cut off at the detector edge and no known region was given, so the inside of the field of view is not determined by the data (the interior problem)${outline}`, {
        field: 'knowledge',
        remedy: { cli: 'give a region of known value inside the field of view (--known x,y,r:HU)', page: 'give a region of known value inside the field of view (draw it in the knowledge panel)' },
      });
    }
    return { cx: 0, cy: 0, centre: 'the isocentre (no view is truncated: the object lies inside the field of view)', supportFrom: 'field of view', support: diskSupport(0, 0, fov) };
  }
  const c = centreRegion(regions, grid);
  const centre = `the centre of ${c.region.name}`;
  if (truncatedViews === 0) return { cx: c.x, cy: c.y, centre, supportFrom: 'field of view', support: diskSupport(c.x, c.y, fov) };
  const outline = recipe.knowledge?.outline;
  if (outline) return { cx: c.x, cy: c.y, centre, supportFrom: 'outline', support: outlineSupport(outline, placed.outline, grid, c.x, c.y) };
  const r = Math.max(REACH_MARGIN * reach, fov);
  return { cx: c.x, cy: c.y, centre, supportFrom: `estimated reach of the object (${r.toFixed(0)} mm)`, support: diskSupport(c.x, c.y, r) };
}

function scaled(hooks: RunHooks, from: number, to: number): RunHooks {
  const p = hooks.onProgress;
  return { signal: hooks.signal, onProgress: p ? (f, stage) => p(from + (to - from) * f, stage) : undefined };
}

/**
 * FBP with water extension, for checking an outline against what the data show in the field of
 * view (as FBP with knowledge checks it): the field may hold air beyond the body, which the
 * outline rightly leaves out.
 */
async function fieldImage(ws: Workspace, scan: Scan, grid: ImageGrid, analysis: EdgeAnalysis, hooks: RunHooks): Promise<Float32Array> {
  const r = await fbp2d(ws, scan, { grid, extension: planExtension(scan, 'water', analysis) }, { signal: hooks.signal });
  return r.image.data;
}

/** Reconstructs the field of view of a 2D scan by DBP and finite Hilbert inversion. */
export async function runDbp(ws: Workspace, scan: Scan, recipe: Recipe, hooks: RunHooks = {}, masks?: MaskInputs): Promise<DbpResult> {
  const t0 = performance.now();
  const g = scan.geometry;
  require2d(g);
  const fov = fovRadius(g);
  if (!(fov > 0)) throw new InputError('dbp: the detector does not measure the central ray, so there is no field of view to reconstruct');
  const analysis = analyseEdges(scan);
  const reach = objectRadius(analysis);
  const grid = chooseGrid(scan, recipe.grid, reach);
  let truncatedViews = 0;
  for (let v = 0; v < analysis.nViews; v++) if (analysis.truncated[0][v] || analysis.truncated[1][v]) truncatedViews++;
  const seen = recipe.knowledge?.outline ? await fieldImage(ws, scan, grid, analysis, hooks) : undefined;
  const placed = placeKnowledge(recipe.knowledge, { grid, fovRadius: fov, muWater: scan.muWater, masks, image: seen });
  const decision = decide(placed, recipe, fov, reach, truncatedViews, grid);
  const step = Math.max(Math.min(grid.dx, grid.dy), (2 * fov) / MAX_NODES_ACROSS);
  const family = chordFamily(decision.cx, decision.cy, { step, fovRadius: fov, support: decision.support });
  const derivative = dbpDerivative(scan);
  const t1 = performance.now();

  const hilbert = await dbpAtPoints(ws, g, derivative.data, samplePoints(family), scaled(hooks, 0, 0.3));
  const t2 = performance.now();

  // On a truncated scan with no outline the exterior is estimated from the known regions (exterior.ts).
  const exterior = placed.regions.length && truncatedViews > 0 && !recipe.knowledge?.outline
    ? await exteriorFromKnownRegions(ws, scan, recipe.knowledge!, grid, masks, hooks) : undefined;
  const sino = sinogramView(scan.data, viewVectors(g), kernelKind(g), g);
  const determined = new Uint8Array(family.count);
  const sampleStart = new Int32Array(family.count + 1);
  for (let m = 0; m < family.count; m++) sampleStart[m + 1] = sampleStart[m] + family.chords[m].at.length;
  const problemOf = (m: number): ChordProblem => {
    const c = family.chords[m];
    const equations = knownMeans(family, c, placed.regions, grid);
    determined[m] = equations.length > 0 || truncatedViews === 0 ? 1 : 0;
    return {
      nodes: c.nodes, at: c.at, hilbert: hilbert.subarray(sampleStart[m], sampleStart[m + 1]),
      lineIntegral: chordLineIntegral(sino, family.cx, family.cy, c.ex, c.ey), lineWeight: LINE_WEIGHT,
      equations, smoothOutside: SMOOTH_OUTSIDE, inside0: c.inside0, inside1: c.inside1,
      exterior: exterior && { weight: exterior.weight, values: Float64Array.from(c.nodes, (t) => exterior.at(family.cx + t * c.ex, family.cy + t * c.ey)) },
    };
  };
  const { edgeHu, ...coupling } = DEFAULT_COUPLING;
  const muWater = scan.muWater ?? analysis.mu;
  const solved = await solveCoupled(ws, family, problemOf, { ...coupling, edge: (edgeHu / 1000) * muWater }, scaled(hooks, 0.3, 0.98));
  ws.reset();
  const t3 = performance.now();

  const drawn = chordImage(family, solved.profiles, determined, grid, fov, 0);
  const image: Image2D = { grid, data: drawn.data, quantity: 'mu', muWater: scan.muWater, fovRadius: fov };
  const timings = { derivative: (t1 - t0) / 1000, backprojection: (t2 - t1) / 1000, solve: (t3 - t2) / 1000, total: (performance.now() - t0) / 1000 };
  const { report, warnings } = dbpReport({ decision, family, placed, image, undetermined: drawn.undetermined, determined, solved, exterior: exterior?.from ?? (recipe.knowledge?.outline ? 'zero beyond the outline, kept smooth inside it' : 'none needed (no view is truncated)'), truncatedViews, nViews: analysis.nViews, fov, timings });
  hooks.onProgress?.(1, 'done');
  return { image, undetermined: drawn.undetermined, warnings: [...derivative.warnings, ...warnings], report };
}
