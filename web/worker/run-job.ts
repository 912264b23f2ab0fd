// A recipe run in the page's coordinator: the memory budget checked before any work, the
// stored projections read a chunk of views at a time (reduced as the recipe asks), FDK streaming
// them to the engine, and the result stored as it leaves the engine (volume-result.ts); 2D scans
// and iterative methods read the scan whole.
import { dataResidual } from '../core/data-residual';
import type { Workspace } from '../core/engine/workspace';
import { throwIfCancelled } from '../core/errors';
import type { Image2D } from '../core/image';
import { checkMemoryBudget, estimatedGrid, type RunContext } from '../core/memory-budget';
import { readWholeScan, type ProjectionSource } from '../core/projection-source';
import { recipeLabel } from '../core/recipe/label';
import { validateRecipe, type Recipe } from '../core/recipe/recipe';
import { runRecipe, type RecipeInputs, type RecipeResult } from '../core/recipe/run';
import { checkReduction, isIdentity, reduceSource } from '../core/reduction';
import { planResidual, ResidualTap } from '../core/residual-sample';
import type { RunHooks } from '../core/run-hooks';
import type { Scan } from '../core/scan';
import { rowGeometry } from '../core/truncation/central-row';
import type { UseStore } from '../store/db';
import { loadPreview, storedProjections } from '../store/projections';
import type { ResultMeta, ScanMeta } from '../store/records';
import { changeJob } from '../store/jobs';
import { saveResult } from '../store/results';
import { loadMasks, maskNamesOf } from '../store/knowledge';
import { loadReferenceVolume, loadScanReference } from '../store/scans';
import { compared } from './prior-steps';
import { storeVolumeResult, type ResultDescription } from './volume-result';

export interface RunJobContext {
  ws: Workspace;
  store: UseStore;
  sharedMemory: boolean;
  /** Bytes the run may use, and where that figure comes from (for the refusal). */
  budget: { bytes: number; source: string };
  /** Images the recipe names from storage (a prior); the masks its knowledge names are added here. */
  inputs: (recipe: Recipe, cone: boolean) => Promise<RecipeInputs>;
}

export interface RunRequest {
  scanId: string;
  recipe: unknown;
  name?: string;
  /** The page's queue job: marked done in the result's own transaction. */
  jobId?: string;
}

/** The scan's stored projections as the recipe wants them (reduced). */
function recipeSource(meta: ScanMeta, recipe: Recipe, store: UseStore): ProjectionSource {
  const reduce = checkReduction(recipe.reduce, meta.geometry, 'recipe reduce');
  return reduceSource(storedProjections(meta, store), reduce);
}

/** Runs a recipe on a stored scan and stores the result; nothing is stored when it fails or is cancelled. */
export async function runRecipeJob(ctx: RunJobContext, req: RunRequest, hooks: RunHooks): Promise<ResultMeta> {
  const t0 = performance.now();
  const recipe = validateRecipe(req.recipe);
  const { meta, reference } = await loadScanReference(req.scanId, ctx.store);
  const run: RunContext = { workers: ctx.ws.parallelism, sharedMemory: ctx.sharedMemory, storesResult: true };
  const estimate = checkMemoryBudget(meta.geometry, recipe, run, ctx.budget.bytes, ctx.budget.source);
  const source = recipeSource(meta, recipe, ctx.store);
  const cone = source.geometry.kind === 'cone';
  const inputs = { ...(await ctx.inputs(recipe, cone)), masks: await loadMasks(ctx.store, meta, maskNamesOf(recipe.knowledge)) };
  if (estimate.pixelWeightFloats !== undefined) inputs.pixelWeightFloats = estimate.pixelWeightFloats;
  throwIfCancelled(hooks.signal);
  const desc: ResultDescription = { name: req.name ?? recipeLabel(recipe as unknown as Record<string, unknown>), recipe: recipe as unknown as Record<string, unknown>, t0, jobId: req.jobId };
  // The reconstruction takes the first 95% of the bar; checks and storing the rest.
  const runHooks: RunHooks = { ...hooks, onProgress: hooks.onProgress && ((f, stage) => hooks.onProgress!(0.95 * f, stage)) };
  if (!cone) {
    const scan = await readWholeScan(source, hooks.signal);
    const out = await runRecipe(ctx.ws, scan, recipe, runHooks, inputs);
    throwIfCancelled(hooks.signal);
    return storeImageResult(ctx, { scanId: req.scanId, scan, reference }, out, desc, hooks);
  }
  const plan = planResidual(estimatedGrid(source.geometry, recipe), source.geometry);
  const tap = new ResidualTap(source, plan);
  const referenceVolume = meta.referenceVolume ? await loadReferenceVolume(req.scanId, ctx.store) : undefined;
  const centralRow = isIdentity(recipe.reduce) ? await storedCentralRow(meta, ctx.store) : undefined;
  return storeVolumeResult(
    { ws: ctx.ws, store: ctx.store, scanId: req.scanId, scanMeta: meta, reference, referenceVolume, residual: { plan, tap }, hooks },
    desc,
    (sink) => runRecipe(ctx.ws, tap.source, recipe, runHooks, inputs, { sink, centralRow }),
  );
}

/** The stored preview row as a fan-beam scan (for the volume's extent, without reading the scan). */
async function storedCentralRow(meta: ScanMeta, store: UseStore): Promise<Scan> {
  const p = await loadPreview(meta, store);
  return { geometry: rowGeometry(meta.geometry), data: p.data, muWater: meta.muWater };
}

/**
 * Compares an image with the scan's reference, re-projects it against the measured data, and
 * stores it as a result of the scan (warnings for values that cannot be trusted), with the mask
 * of the pixels it does not determine when the method gives one (DBP).
 */
export async function storeImageResult(
  ctx: Pick<RunJobContext, 'ws' | 'store'>, s: { scanId: string; scan: Scan; reference?: Image2D },
  out: Pick<RecipeResult, 'image' | 'warnings' | 'report' | 'undetermined'>, desc: ResultDescription, hooks: RunHooks,
): Promise<ResultMeta> {
  const warnings = [...out.warnings];
  let bad = 0;
  for (const v of out.image.data) if (!Number.isFinite(v)) bad++;
  if (bad) warnings.push(`${bad} pixels are not finite numbers (NaN or infinity): the image is not trustworthy`);
  const metrics = compared(out.image, s.reference, warnings, out.undetermined);
  hooks.onProgress?.(0.97, 'checking against the measured data');
  const residual = await dataResidual(ctx.ws, out.image, s.scan, { signal: hooks.signal });
  hooks.onProgress?.(1, 'storing');
  const seconds = (performance.now() - desc.t0) / 1000;
  const job = desc.jobId;
  return saveResult({
    scanId: s.scanId, name: desc.name, recipe: desc.recipe, warnings, report: out.report, metrics, residual, seconds,
  }, out.image, ctx.store, undefined, job ? (meta, tx) => changeJob(tx, job, { state: 'done', resultId: meta.id, seconds }) : undefined,
  out.undetermined ? { undetermined: out.undetermined } : {});
}
