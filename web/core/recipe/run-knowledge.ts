// FBP of a 2D scan with the user's knowledge (known regions, outline): the knowledge-driven
// detector extension (completion/knowledge-extension.ts), and the evidence a user checks it by:
// each region's value with the base extension alone and with the knowledge, and the residual
// against the measured data of both images (a correction that invents structure the data do not
// hold shows there).
import { planKnowledgeExtension } from '../completion/knowledge-extension';
import { suggestedOutline } from '../completion/suggested-outline';
import { dataResidual } from '../data-residual';
import type { Workspace } from '../engine/workspace';
import { InputError } from '../errors';
import { fovRadius } from '../geometry/view-vectors';
import type { Image2D } from '../image';
import { describeOutline, placeKnowledge, type Knowledge } from '../knowledge';
import { fbp2d } from '../recon/fbp';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { analyseEdges, objectRadius } from '../truncation/edges';
import { planExtension } from '../truncation/extension-plan';
import type { RecipeInputs } from '../iterative/run';
import { chooseGrid } from './grid';
import { knowledgeWarnings, regionReports, residualFigures, type KnowledgeReport } from './knowledge-report';
import type { Recipe } from './recipe';
import type { RecipeResult } from './run';

/** Reconstructs a 2D scan by FBP with the recipe's knowledge. */
export async function runKnowledgeFbp(ws: Workspace, scan: Scan, recipe: Recipe, hooks: RunHooks, inputs: RecipeInputs): Promise<RecipeResult> {
  const t0 = performance.now();
  const knowledge: Knowledge = recipe.knowledge ?? {};
  const extend = recipe.extend ?? 'none';
  if (extend === 'none') {
    throw new InputError('recipe extend: got "none", but known regions and outlines work by adjusting a detector extension; choose water (the usual one), edge, mirror, cosine or outline');
  }
  const muWater = scan.muWater;
  if (!(muWater && muWater > 0)) throw new InputError('knowledge: known values are in HU and the scan has no mu of water', { field: 'knowledge', remedy: { cli: 'calibrate the scan (rimfill calibrate) or give --mu-water first', page: "set the scan's mu of water first (HU calibration, in the Images tab)" } });
  const method = extend === 'outline' ? 'water' : extend;
  const analysis = analyseEdges(scan);
  const grid = chooseGrid(scan, recipe.grid, objectRadius(analysis));
  const fov = fovRadius(scan.geometry);
  const basePlan = planExtension(scan, method, analysis);
  const fbp = { filter: recipe.filter, bandLimit: recipe.bandLimit };
  // The base extension's image first: the outline is checked against what it shows in the field.
  const before = await fbp2d(ws, scan, { grid, ...fbp, extension: basePlan }, { signal: hooks.signal, onProgress: (f, s) => hooks.onProgress?.(0.2 * f, s) });
  const placed = placeKnowledge(knowledge, { grid, fovRadius: fov, muWater, masks: inputs.masks, image: before.image.data });
  const { extension, report: completion } = await planKnowledgeExtension(ws, scan, {
    method, regions: placed.regions, outline: knowledge.outline, masks: inputs.masks, grid, fbp, muWater,
  }, { signal: hooks.signal, onProgress: (f, s) => hooks.onProgress?.(0.2 + 0.3 * f, s) });
  const t1 = performance.now();
  const after = await fbp2d(ws, scan, { grid, ...fbp, extension }, { signal: hooks.signal, onProgress: (f, s) => hooks.onProgress?.(0.5 + 0.2 * f, s) });
  const t2 = performance.now();
  const image: Image2D = { ...after.image, fovRadius: fov };
  const resBefore = await dataResidual(ws, before.image, scan, hooks);
  const resAfter = await dataResidual(ws, image, scan, hooks);
  hooks.onProgress?.(1, 'done');
  const knowledgeReport: KnowledgeReport = {
    used: [...placed.regions.map((r) => r.name), ...(knowledge.outline ? [describeOutline(knowledge.outline)] : [])],
    regions: regionReports(placed.regions, before.image.data, image.data, muWater),
    residual: { before: residualFigures(resBefore), after: residualFigures(resAfter) },
    completion,
    suggestedOutline: suggestedOutline(analysis),
  };
  return {
    image,
    warnings: [...after.warnings, ...knowledgeWarnings(knowledgeReport)],
    report: {
      timings: { plan: (t1 - t0) / 1000, fbp: (t2 - t1) / 1000, residual: (performance.now() - t2) / 1000 },
      extension: { ...basePlan.summary, ...(extend === 'outline' ? { method: 'outline' } : {}) },
      knowledge: knowledgeReport,
    },
  };
}
