// The page's network-prior step, run by the coordinator: the network input (extension + FBP on
// the model grid) -> normalize -> network -> de-normalize -> the network's output; its
// consistency report against the measured data; then, when asked for, the prior-guided
// data-consistent step and its own report. Nothing is stored until everything has run: the
// network output and the data-consistent result are written in one transaction.
import { compareImages, type Comparison } from '../core/compare';
import { consistencyReport, type ConsistencyReport } from '../core/consistency/consistency-report';
import { dataConsistentFromPrior } from '../core/consistency/data-consistent';
import { disagreementMap } from '../core/consistency/disagreement-map';
import { dataResidualOf } from '../core/consistency/residual-figures';
import type { Workspace } from '../core/engine/workspace';
import { InputError, throwIfCancelled } from '../core/errors';
import type { Image2D } from '../core/image';
import { networkPrior } from '../core/model/network-prior';
import type { NetworkRunner } from '../core/model/runner';
import { chooseGrid } from '../core/recipe/grid';
import { validateRecipe, type GridChoice } from '../core/recipe/recipe';
import { runRecipe } from '../core/recipe/run';
import type { RunHooks } from '../core/run-hooks';
import type { Scan } from '../core/scan';
import { storedConsistency } from '../store/consistency';
import { putAll, type UseStore } from '../store/db';
import { loadModel } from '../store/models';
import type { ResultMeta } from '../store/records';
import { resultRecords } from '../store/results';
import { loadScan } from '../store/scans';

/** What the page asks for (validated here: it crosses from the page). */
export interface NetworkPriorRequest {
  scanId: string;
  modelId: string;
  /** Reconstruction grid; absent: chosen from the scan, as for recipes. */
  grid?: GridChoice;
  /** Run the prior-guided data-consistent step after the network. */
  dataConsistent: boolean;
  /** Its iterations (absent: the method's default). */
  iterations?: number;
}

export interface NetworkPriorOutcome {
  /** The stored network output (with its consistency report). */
  network: ResultMeta;
  /** The stored data-consistent result, when the step was asked for. */
  consistent?: ResultMeta;
}

export interface NetworkPriorContext {
  ws: Workspace;
  store: UseStore;
  /** Opens ONNX bytes in the network runtime (the model worker). */
  open: (onnx: Uint8Array, signal?: AbortSignal) => Promise<NetworkRunner>;
}

const stage = (hooks: RunHooks, a: number, b: number): RunHooks => ({
  signal: hooks.signal,
  onProgress: (f, name) => hooks.onProgress?.(a + (b - a) * f, name),
});

function checkRequest(r: NetworkPriorRequest): void {
  if (typeof r.scanId !== 'string' || typeof r.modelId !== 'string') throw new InputError('network prior: a scan and a network must be chosen');
  if (r.grid !== undefined) validateRecipe({ method: 'fbp', grid: r.grid });
  if (r.iterations !== undefined && !(Number.isInteger(r.iterations) && r.iterations >= 1 && r.iterations <= 10000)) {
    throw new InputError(`network prior iterations: got ${r.iterations}, expected a whole number from 1 to 10000`);
  }
}

function compared(image: Image2D, reference: Image2D | undefined, warnings: string[]): Comparison | null {
  if (!reference) return null;
  try {
    return compareImages(image, reference, image.fovRadius);
  } catch (err) {
    if (!(err instanceof InputError)) throw err;
    warnings.push(`no comparison with the reference: ${err.message}`);
    return null;
  }
}

function nonFiniteWarning(image: Image2D, warnings: string[]): void {
  let bad = 0;
  for (const v of image.data) if (!Number.isFinite(v)) bad++;
  if (bad) warnings.push(`${bad} pixels are not finite numbers (NaN or infinity): the image is not trustworthy`);
}

/** The disagreement map of a checked image (undefined when no ray was flagged). */
async function mapOf(ws: Workspace, scan: Scan, image: Image2D, report: ConsistencyReport, hooks: RunHooks): Promise<Float32Array | undefined> {
  if (report.summary.flaggedRays === 0) return undefined;
  return disagreementMap(ws, scan, image.grid, report.profiles.flagged, hooks);
}

/** Runs the network-prior step on a stored scan with a stored network and stores what it made. */
export async function runNetworkPriorJob(ctx: NetworkPriorContext, req: NetworkPriorRequest, hooks: RunHooks = {}): Promise<NetworkPriorOutcome> {
  const t0 = performance.now();
  checkRequest(req);
  const { ws, store } = ctx;
  const { meta: scanMeta, scan, reference } = await loadScan(req.scanId, store);
  const g = scan.geometry;
  if (g.kind === 'cone' || g.detector.rows !== 1) {
    throw new InputError(`network prior: scan "${scanMeta.name}" has ${g.detector.rows} detector rows (${g.kind} beam); the network prior works on 2D scans`);
  }
  const { meta: model, onnx } = await loadModel(req.modelId, store);
  const grid = chooseGrid(scan, req.grid);
  throwIfCancelled(hooks.signal);

  hooks.onProgress?.(0, 'loading the network');
  const runner = await ctx.open(onnx, hooks.signal);
  let net;
  try {
    net = await networkPrior(scan, model.info, runner, grid, (recipe, h) => runRecipe(ws, scan, recipe, h), stage(hooks, 0.02, 0.45));
  } finally {
    await runner.dispose();
  }
  const netSeconds = (performance.now() - t0) / 1000;
  const netReport = await consistencyReport(ws, scan, net.output, stage(hooks, 0.45, 0.55));
  const netMap = await mapOf(ws, scan, net.output, netReport, stage(hooks, 0.55, 0.6));
  const netWarnings = [...model.warnings, ...net.warnings, ...netReport.warnings];
  nonFiniteWarning(net.output, netWarnings);

  let dc: { image: Image2D; report: Record<string, unknown>; warnings: string[]; consistency: ConsistencyReport; map?: Float32Array; seconds: number } | undefined;
  if (req.dataConsistent) {
    const t1 = performance.now();
    const r = await dataConsistentFromPrior(ws, scan, net.prior, { grid, iterations: req.iterations }, stage(hooks, 0.6, 0.92));
    const consistency = await consistencyReport(ws, scan, r.image, stage(hooks, 0.92, 0.97));
    const map = await mapOf(ws, scan, r.image, consistency, stage(hooks, 0.97, 0.98));
    dc = { ...r, consistency, map, warnings: [...r.warnings, ...consistency.warnings], seconds: (performance.now() - t1) / 1000 };
    nonFiniteWarning(r.image, dc.warnings);
  }
  throwIfCancelled(hooks.signal);
  hooks.onProgress?.(0.99, 'storing');

  const modelRef = { id: model.id, name: model.name, fileName: model.fileNames.model, info: model.info };
  const gridChoice = { size: grid.nx, pixel: grid.dx };
  const netStored = storedConsistency(netReport, net.output.grid, netMap);
  const netRecords = resultRecords({
    scanId: req.scanId,
    name: `Network: ${model.name}`,
    recipe: { method: 'network', model: modelRef, input: net.report.inputRecipe, grid: gridChoice },
    warnings: netWarnings,
    report: { network: net.report, model: modelRef, dataConsistent: req.dataConsistent ? { ran: true } : { skipped: 'it was not asked for' } },
    metrics: compared(net.output, reference, netWarnings),
    residual: dataResidualOf(netReport),
    consistency: netStored.meta,
    seconds: netSeconds,
  }, net.output, { consistency: netStored.arrays });
  const entries = [...netRecords.entries];
  let consistent: ResultMeta | undefined;
  if (dc) {
    const stored = storedConsistency(dc.consistency, dc.image.grid, dc.map);
    const rec = resultRecords({
      scanId: req.scanId,
      name: `Data-consistent, prior from ${model.name}`,
      recipe: { method: 'prior', prior: { source: 'network', model: modelRef, resultId: netRecords.meta.id }, grid: gridChoice, ...(req.iterations ? { iterations: req.iterations } : {}) },
      warnings: dc.warnings,
      report: { ...dc.report, priorResultId: netRecords.meta.id },
      metrics: compared(dc.image, reference, dc.warnings),
      residual: dataResidualOf(dc.consistency),
      consistency: stored.meta,
      seconds: dc.seconds,
    }, dc.image, { consistency: stored.arrays });
    entries.push(...rec.entries);
    consistent = rec.meta;
  }
  await putAll(entries, store);
  hooks.onProgress?.(1, 'storing');
  return { network: netRecords.meta, consistent };
}
