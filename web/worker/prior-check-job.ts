// The page's check of a prior that is already an image: a stored result (of this scan or of
// another scan of the same object) or an image file (an earlier full-field scan, a DICOM series
// slice, the output of the user's own model run elsewhere). The prior is re-projected against
// the measured data (consistency report and disagreement map); when asked for, the prior-guided
// data-consistent step follows with its own report. The checked prior is stored as a new result
// of this scan (its report belongs to this scan's data; the source is never changed), and the
// data-consistent result beside it, in one transaction: nothing is stored when anything fails.
import type { Workspace } from '../core/engine/workspace';
import { InputError, throwIfCancelled } from '../core/errors';
import { fovRadius } from '../core/geometry/view-vectors';
import type { Image2D } from '../core/image';
import { chooseGrid } from '../core/recipe/grid';
import type { GridChoice } from '../core/recipe/recipe';
import type { RunHooks } from '../core/run-hooks';
import type { UseStore } from '../store/db';
import { putResultEntries } from '../store/transact';
import type { ResultMeta } from '../store/records';
import { loadResultImage } from '../store/results';
import { loadScan } from '../store/scans';
import type { InputFile } from './import-scan';
import { readImageFiles } from './read-image-files';
import { checkDataConsistentRequest, checkedResultRecords, checkImage, compared, consistentFromPrior, consistentResultRecords, require2dScan, stage } from './prior-steps';

/** Where the prior comes from. */
export type PriorImageSource =
  | { kind: 'result'; resultId: string }
  /** An image file, or the files of one image (MetaImage header + raw, raw + JSON sidecar). */
  | { kind: 'file'; files: InputFile[]; slice?: number };

/** What the page asks for (validated here: it crosses from the page). */
export interface PriorCheckRequest {
  scanId: string;
  source: PriorImageSource;
  /** Grid of the data-consistent step; absent: chosen from the scan, as for recipes. */
  grid?: GridChoice;
  dataConsistent: boolean;
  /** Its iterations (absent: the method's default). */
  iterations?: number;
}

export interface PriorCheckOutcome {
  /** The checked prior, stored as a result of the scan with its consistency report. */
  prior: ResultMeta;
  /** The stored data-consistent result, when the step was asked for. */
  consistent?: ResultMeta;
}

export interface PriorCheckContext {
  ws: Workspace;
  store: UseStore;
}

function checkRequest(r: PriorCheckRequest): void {
  if (typeof r.scanId !== 'string') throw new InputError('prior check: a scan must be chosen');
  const s = r.source as Partial<{ kind: string; resultId: unknown; files: unknown }> | undefined;
  if (s?.kind === 'result') {
    if (typeof s.resultId !== 'string' || !s.resultId) throw new InputError('prior check: choose the result to use as the prior');
  } else if (s?.kind === 'file') {
    if (!Array.isArray(s.files) || s.files.length === 0) throw new InputError('prior check: choose the image file to use as the prior');
  } else {
    throw new InputError(`prior check: source "${String(s?.kind)}", expected a stored result or an image file`);
  }
  checkDataConsistentRequest(r, 'prior check');
}

/** The prior image, a name for it, and how its source is recorded. */
interface LoadedPrior {
  image: Image2D;
  name: string;
  source: Record<string, unknown>;
  warnings: string[];
}

async function loadPrior(source: PriorImageSource, muWater: number | undefined, fov: number, store: UseStore): Promise<LoadedPrior> {
  if (source.kind === 'result') {
    const { meta, image } = await loadResultImage(source.resultId, store);
    return { image: { ...image, fovRadius: fov }, name: meta.name, source: { kind: 'result', resultId: meta.id, scanId: meta.scanId, name: meta.name }, warnings: [] };
  }
  const r = await readImageFiles(source.files, muWater, source.slice);
  return { image: { ...r.value, fovRadius: fov }, name: r.name, source: { kind: 'file', fileNames: r.fileNames, ...(source.slice !== undefined ? { slice: source.slice } : {}) }, warnings: r.warnings };
}

/** Checks a prior image against a stored scan (and, when asked, reconstructs from it) and stores both. */
export async function runPriorCheckJob(ctx: PriorCheckContext, req: PriorCheckRequest, hooks: RunHooks = {}): Promise<PriorCheckOutcome> {
  checkRequest(req);
  const { ws, store } = ctx;
  const { meta: scanMeta, scan, reference } = await loadScan(req.scanId, store);
  require2dScan(scan, scanMeta.name, 'prior check');
  const grid = chooseGrid(scan, req.grid);
  hooks.onProgress?.(0, 'reading the prior');
  const t0 = performance.now();
  const prior = await loadPrior(req.source, scan.muWater, fovRadius(scan.geometry), store);
  throwIfCancelled(hooks.signal);
  const checked = await checkImage(ws, scan, prior.image, stage(hooks, 0.02, 0.2));
  const checkSeconds = (performance.now() - t0) / 1000;
  const priorWarnings = [...prior.warnings, ...checked.warnings];
  const dc = req.dataConsistent ? await consistentFromPrior(ws, scan, prior.image, grid, req.iterations, stage(hooks, 0.2, 0.98)) : undefined;
  throwIfCancelled(hooks.signal);
  hooks.onProgress?.(0.99, 'storing');

  const priorRecords = checkedResultRecords({
    scanId: req.scanId,
    name: `Prior: ${prior.name}`,
    recipe: { method: 'checked-prior', source: prior.source },
    warnings: priorWarnings,
    report: { prior: prior.source, dataConsistent: req.dataConsistent ? { ran: true } : { skipped: 'it was not asked for' } },
    metrics: compared(prior.image, reference, priorWarnings),
    seconds: checkSeconds,
  }, prior.image, checked);
  const entries = [...priorRecords.entries];
  let consistent: ResultMeta | undefined;
  if (dc) {
    const rec = consistentResultRecords(dc, {
      scanId: req.scanId, priorName: prior.name, priorSource: { source: 'checked-prior', from: prior.source }, priorId: priorRecords.meta.id,
      grid, iterations: req.iterations, reference,
    });
    entries.push(...rec.entries);
    consistent = rec.meta;
  }
  await putResultEntries(req.scanId, entries, store);
  hooks.onProgress?.(1, 'storing');
  return { prior: priorRecords.meta, consistent };
}
