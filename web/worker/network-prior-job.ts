// The page's network-prior step, run by the coordinator: the network input (extension + FBP on
// the model grid) -> normalize -> network -> de-normalize -> the network's output; its
// consistency report against the measured data; then, when asked for, the prior-guided
// data-consistent step and its own report. Nothing is stored until everything has run: the
// network output and the data-consistent result are written in one transaction.
import type { Workspace } from '../core/engine/workspace';
import { InputError, throwIfCancelled } from '../core/errors';
import { networkPrior } from '../core/model/network-prior';
import type { NetworkRunner } from '../core/model/runner';
import { chooseGrid } from '../core/recipe/grid';
import type { GridChoice } from '../core/recipe/recipe';
import { runRecipe } from '../core/recipe/run';
import type { RunHooks } from '../core/run-hooks';
import type { UseStore } from '../store/db';
import { putResultEntries } from '../store/transact';
import { loadModel } from '../store/models';
import type { ResultMeta } from '../store/records';
import { loadScan } from '../store/scans';
import { checkDataConsistentRequest, checkedResultRecords, checkImage, compared, consistentFromPrior, consistentResultRecords, require2dScan, stage } from './prior-steps';

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

function checkRequest(r: NetworkPriorRequest): void {
  if (typeof r.scanId !== 'string' || typeof r.modelId !== 'string') throw new InputError('network prior: a scan and a network must be chosen');
  checkDataConsistentRequest(r, 'network prior');
}

/** Runs the network-prior step on a stored scan with a stored network and stores what it made. */
export async function runNetworkPriorJob(ctx: NetworkPriorContext, req: NetworkPriorRequest, hooks: RunHooks = {}): Promise<NetworkPriorOutcome> {
  const t0 = performance.now();
  checkRequest(req);
  const { ws, store } = ctx;
  const { meta: scanMeta, scan, reference } = await loadScan(req.scanId, store);
  require2dScan(scan, scanMeta.name, 'network prior');
  const { meta: model, onnx } = await loadModel(req.modelId, store);
  const grid = chooseGrid(scan, req.grid);
  throwIfCancelled(hooks.signal);

  hooks.onProgress?.(0, 'loading the network');
  const runner = await ctx.open(onnx, hooks.signal);
  let net: Awaited<ReturnType<typeof networkPrior>>;
  try {
    net = await networkPrior(scan, model.info, runner, grid, (recipe, h) => runRecipe(ws, scan, recipe, h), stage(hooks, 0.02, 0.45));
  } finally {
    await runner.dispose();
  }
  const netSeconds = (performance.now() - t0) / 1000;
  const netCheck = await checkImage(ws, scan, net.output, stage(hooks, 0.45, 0.6));
  const netWarnings = [...model.warnings, ...net.warnings, ...netCheck.warnings];
  const dc = req.dataConsistent ? await consistentFromPrior(ws, scan, net.prior, grid, req.iterations, stage(hooks, 0.6, 0.98)) : undefined;
  throwIfCancelled(hooks.signal);
  hooks.onProgress?.(0.99, 'storing');

  const modelRef = { id: model.id, name: model.name, fileName: model.fileNames.model, info: model.info };
  const gridChoice = { size: grid.nx, pixel: grid.dx };
  const netRecords = checkedResultRecords({
    scanId: req.scanId,
    name: `Network: ${model.name}`,
    recipe: { method: 'network', model: modelRef, input: net.report.inputRecipe, grid: gridChoice },
    warnings: netWarnings,
    report: { network: net.report, model: modelRef, dataConsistent: req.dataConsistent ? { ran: true } : { skipped: 'it was not asked for' } },
    metrics: compared(net.output, reference, netWarnings),
    seconds: netSeconds,
  }, net.output, netCheck);
  const entries = [...netRecords.entries];
  let consistent: ResultMeta | undefined;
  if (dc) {
    const rec = consistentResultRecords(dc, {
      scanId: req.scanId, priorName: model.name, priorSource: { source: 'network', model: modelRef }, priorId: netRecords.meta.id,
      grid, iterations: req.iterations, reference,
    });
    entries.push(...rec.entries);
    consistent = rec.meta;
  }
  await putResultEntries(req.scanId, entries, store);
  hooks.onProgress?.(1, 'storing');
  return { network: netRecords.meta, consistent };
}
