// FBP of a 2D scan with the user's knowledge (known regions, outline): the knowledge-driven
// detector extension (completion/knowledge-extension.ts), and the evidence a user checks it by:
// each region's value with the base extension alone and with the knowledge, and the residual
// against the measured data of both images (a correction that invents structure the data do not
// hold shows there).
import { planKnowledgeExtension, type CompletionReport } from '../completion/knowledge-extension';
import { regionMean } from '../completion/region-values';
import { suggestedOutline, type SuggestedOutline } from '../completion/suggested-outline';
import { dataResidual, type DataResidual } from '../data-residual';
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
import type { Recipe } from './recipe';
import type { RecipeResult } from './run';

/** Per known region: its value, what the base extension gives it and what the knowledge gives it, HU. */
export interface RegionReport {
  name: string;
  knownHu: number;
  beforeHu: number;
  afterHu: number;
}

export interface KnowledgeReport {
  /** What was used, in words ("known region 1 (circle at ...)", "outline (ellipse ...)"). */
  used: string[];
  regions: RegionReport[];
  /** ||A f - p|| over the measured rays with the base extension alone and with the knowledge. */
  residual: { before: ResidualFigures; after: ResidualFigures };
  completion: CompletionReport;
  /** The outline the data suggest (water cylinder reach), for the user to compare and correct. */
  suggestedOutline: SuggestedOutline | null;
}

type ResidualFigures = Pick<DataResidual, 'rms' | 'relative' | 'bias'>;

const hu = (mu: number, muWater: number) => (1000 * (mu - muWater)) / muWater;

function residualFigures(r: DataResidual): ResidualFigures {
  return { rms: r.rms, relative: r.relative, bias: r.bias };
}

/** Reconstructs a 2D scan by FBP with the recipe's knowledge. */
export async function runKnowledgeFbp(ws: Workspace, scan: Scan, recipe: Recipe, hooks: RunHooks, inputs: RecipeInputs): Promise<RecipeResult> {
  const t0 = performance.now();
  const knowledge: Knowledge = recipe.knowledge ?? {};
  const extend = recipe.extend ?? 'none';
  if (extend === 'none') {
    throw new InputError('recipe extend: got "none", but known regions and outlines work by adjusting a detector extension; choose water (the usual one), edge, mirror, cosine or outline');
  }
  const muWater = scan.muWater;
  if (!(muWater && muWater > 0)) throw new InputError('knowledge: known values are in HU and the scan has no mu of water; calibrate the scan (or give --mu-water) first');
  const method = extend === 'outline' ? 'water' : extend;
  const analysis = analyseEdges(scan);
  const grid = chooseGrid(scan, recipe.grid, objectRadius(analysis));
  const fov = fovRadius(scan.geometry);
  const placed = placeKnowledge(knowledge, { grid, fovRadius: fov, muWater, masks: inputs.masks });
  const basePlan = planExtension(scan, method, analysis);
  const fbp = { filter: recipe.filter, cutoff: recipe.cutoff };
  const { extension, report: completion } = await planKnowledgeExtension(ws, scan, {
    method, regions: placed.regions, outline: knowledge.outline, masks: inputs.masks, grid, fbp, muWater,
  }, { signal: hooks.signal, onProgress: (f, s) => hooks.onProgress?.(0.3 * f, s) });
  const t1 = performance.now();
  const before = await fbp2d(ws, scan, { grid, ...fbp, extension: basePlan }, { signal: hooks.signal, onProgress: (f, s) => hooks.onProgress?.(0.3 + 0.2 * f, s) });
  const after = await fbp2d(ws, scan, { grid, ...fbp, extension }, { signal: hooks.signal, onProgress: (f, s) => hooks.onProgress?.(0.5 + 0.2 * f, s) });
  const t2 = performance.now();
  const image: Image2D = { ...after.image, fovRadius: fov };
  const resBefore = await dataResidual(ws, before.image, scan, hooks);
  const resAfter = await dataResidual(ws, image, scan, hooks);
  hooks.onProgress?.(1, 'done');
  const regions: RegionReport[] = placed.regions.map((r) => ({
    name: r.name, knownHu: r.region.hu, beforeHu: hu(regionMean(before.image, r.coverage), muWater), afterHu: hu(regionMean(image, r.coverage), muWater),
  }));
  const warnings = [...after.warnings];
  for (const r of regions) {
    if (Math.abs(r.afterHu - r.knownHu) > 10) warnings.push(`${r.name} reads ${r.afterHu.toFixed(0)} HU after the correction, not ${r.knownHu} HU: the tails could not reach it (check the region and its value)`);
  }
  if (resAfter.rms > 1.05 * resBefore.rms) {
    warnings.push(`the residual against the measured data grew from ${resBefore.rms.toPrecision(3)} to ${resAfter.rms.toPrecision(3)} with the knowledge: check that the regions and the outline are right`);
  }
  const knowledgeReport: KnowledgeReport = {
    used: [...placed.regions.map((r) => r.name), ...(knowledge.outline ? [describeOutline(knowledge.outline)] : [])],
    regions,
    residual: { before: residualFigures(resBefore), after: residualFigures(resAfter) },
    completion,
    suggestedOutline: suggestedOutline(analysis),
  };
  return {
    image,
    warnings,
    report: {
      timings: { plan: (t1 - t0) / 1000, fbp: (t2 - t1) / 1000, residual: (performance.now() - t2) / 1000 },
      extension: { ...basePlan.summary, ...(extend === 'outline' ? { method: 'outline' } : {}) },
      knowledge: knowledgeReport,
    },
  };
}
