// FDK of a cone-beam scan with the user's knowledge: the row-wise water cylinder plan, its rows'
// tails fitted to the knowledge (completion/cone-knowledge.ts), and the same evidence as in 2D
// (run-knowledge.ts): each region's value and the residual against the measured data, with the
// base extension alone and with the knowledge.
import { planConeKnowledge } from '../completion/cone-knowledge';
import type { Workspace } from '../engine/workspace';
import { InputError } from '../errors';
import { describeOutline, placeKnowledge } from '../knowledge';
import { fdk3d } from '../recon/fdk';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { planConeExtension } from '../truncation/cone-extension';
import { coneRowExtension } from '../truncation/row-extension';
import { fovRadius } from '../geometry/view-vectors';
import { volumeDataResidual } from '../volume-residual';
import { axialSlice, sliceAt } from '../volume';
import type { RecipeInputs } from '../iterative/run';
import type { Recipe } from './recipe';
import type { RecipeResult } from './run';
import { knowledgeWarnings, regionReports, residualFigures, type KnowledgeReport } from './knowledge-report';
import { chooseVolumeGrid } from './volume-grid';

/** Reconstructs a cone-beam scan by FDK with the recipe's knowledge. */
export async function runConeKnowledge(ws: Workspace, scan: Scan, recipe: Recipe, hooks: RunHooks, inputs: RecipeInputs): Promise<RecipeResult> {
  const t0 = performance.now();
  const extend = recipe.extend ?? 'none';
  if (extend !== 'water' && extend !== 'outline') {
    throw new InputError(`recipe extend: got "${extend}", but known regions and outlines on cone-beam scans adjust the water cylinder extension; choose water or outline`);
  }
  const muWater = scan.muWater;
  if (!(muWater && muWater > 0)) throw new InputError('knowledge: known values are in HU and the scan has no mu of water', { field: 'knowledge', remedy: { cli: 'calibrate the scan (rimfill calibrate) or give --mu-water first', page: "set the scan's mu of water first (HU calibration, in the Images tab)" } });
  const knowledge = recipe.knowledge ?? {};
  const part = (from: number, to: number): RunHooks => ({ signal: hooks.signal, onProgress: (f, s) => hooks.onProgress?.(from + (to - from) * f, s) });
  const base = await planConeExtension(scan, 'water', part(0, 0.05));
  const grid = chooseVolumeGrid(scan, recipe.grid, recipe.volume, base.objectRadius);
  const fbp = { filter: recipe.filter, bandLimit: recipe.bandLimit };
  const channels = scan.geometry.detector.channels;
  // The base extension's volume first: the outline is checked against what it shows in the field.
  const before = await fdk3d(ws, scan, { grid, ...fbp, extension: coneRowExtension(base, channels) }, part(0.05, 0.3));
  const placed = placeKnowledge(knowledge, { grid, fovRadius: fovRadius(scan.geometry), muWater, masks: inputs.masks, image: before.volume.data });
  const { plan, report: completion } = await planConeKnowledge(ws, scan, base, {
    regions: placed.regions, outline: knowledge.outline, masks: inputs.masks, grid, fbp, muWater,
  }, part(0.3, 0.55));
  const t1 = performance.now();
  const after = await fdk3d(ws, scan, { grid, ...fbp, extension: coneRowExtension(plan, channels) }, part(0.55, 0.8));
  const t2 = performance.now();
  const resBefore = await volumeDataResidual(ws, before.volume, scan, part(0.8, 0.9));
  const resAfter = await volumeDataResidual(ws, after.volume, scan, part(0.9, 1));
  const knowledgeReport: KnowledgeReport = {
    used: [...placed.regions.map((r) => r.name), ...(knowledge.outline ? [describeOutline(knowledge.outline)] : [])],
    regions: regionReports(placed.regions, before.volume.data, after.volume.data, muWater),
    residual: { before: residualFigures(resBefore), after: residualFigures(resAfter) },
    completion,
    suggestedOutline: null,
  };
  const volume = after.volume;
  return {
    image: axialSlice(volume, sliceAt(grid, 0)),
    volume,
    warnings: [...after.warnings, ...knowledgeWarnings(knowledgeReport)],
    report: {
      algorithm: 'fdk', scanType: after.scanType,
      timings: { plan: (t1 - t0) / 1000, fdk: (t2 - t1) / 1000, residual: (performance.now() - t2) / 1000 },
      extension: { ...base.summary, ...(extend === 'outline' ? { method: 'outline' } : {}) },
      knowledge: knowledgeReport,
    },
  };
}
