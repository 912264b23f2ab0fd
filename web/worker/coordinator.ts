// The coordinator: imports, the demo, recipe runs and comparisons, off the page's main thread.
// It is the only writer of scans and results; runs take turns on one engine workspace.
import { compareImages, type Comparison } from '../core/compare';
import { compareVolumes, type VolumeComparison } from '../core/compare-volume';
import { dataResidual } from '../core/data-residual';
import { CancelledError, InputError, throwIfCancelled } from '../core/errors';
import type { Workspace } from '../core/engine/workspace';
import type { Image2D } from '../core/image';
import { axialSlice, sliceAt, type Volume } from '../core/volume';
import { coneFovHalfHeight } from '../core/geometry/cone';
import { fovRadius } from '../core/geometry/view-vectors';
import type { Scan } from '../core/scan';
import { recipeLabel } from '../core/recipe/label';
import { validateRecipe, type Recipe } from '../core/recipe/recipe';
import { runRecipe, type RecipeInputs } from '../core/recipe/run';
import type { RunHooks } from '../core/run-hooks';
import { volumeDataResidual } from '../core/volume-residual';
import { pageStore, type UseStore } from '../store/db';
import { RecordError, type ModelMeta, type ResultMeta, type ScanMeta } from '../store/records';
import { getResultMeta, loadResultImage, loadResultVolume, saveResult } from '../store/results';
import { loadReferenceVolume, loadScan, saveScan } from '../store/scans';
import { saveSettings } from '../store/settings';
import type { NetworkRunner } from '../core/model/runner';
import { saveModel } from '../store/models';
import { addJob, changeJob, deleteJobs, updateJob } from '../store/jobs';
import type { AppReplies, AppRequest, CompareTarget, EngineInfo } from './app-protocol';
import { buildConeDemoScan, CONE_DEMO, CONE_DEMO_NAME, type ConeDemoSettings } from './demo-cone-scan';
import { buildDemoScan, DEMO, DEMO_NAME, type DemoSettings } from './demo-scan';
import { checkModelFiles } from './import-model-files';
import { readScanFiles, type InputFile } from './import-scan';
import { readImageFiles, readVolumeFiles } from './read-image-files';
import { runNetworkPriorJob } from './network-prior-job';
import { runPriorCheckJob } from './prior-check-job';
import { calibrateScan } from './calibrate-job';
import { isLibraryRequest, libraryOp } from './library-ops';
import { exportDicomJob } from './export-dicom-job';
import { changeKnowledge } from './knowledge-ops';
import { loadMasks, maskNamesOf } from '../store/knowledge';

export interface CoordinatorOptions {
  /** Opens the engine workspace (called on the first run, and again after a failure). */
  openWorkspace: () => Promise<Workspace>;
  /** Whether that workspace shares memory between workers (for `info`). */
  sharedMemory: boolean;
  store?: UseStore;
  /** Opens ONNX bytes in the network runtime (the model worker); absent: no network support. */
  openModel?: (onnx: Uint8Array, signal?: AbortSignal) => Promise<NetworkRunner>;
}

export class Coordinator {
  private workspace?: Promise<Workspace>;
  private turn: Promise<unknown> = Promise.resolve();
  /** Knowledge changes take turns among themselves (never waiting for a run). */
  private knowledgeTurn: Promise<unknown> = Promise.resolve();
  private readonly store: UseStore;

  constructor(private readonly options: CoordinatorOptions) {
    this.store = options.store ?? pageStore();
  }

  /** Answers one request. */
  async handle<K extends AppRequest['op']>(req: Extract<AppRequest, { op: K }>, hooks: RunHooks = {}): Promise<AppReplies[K]> {
    const r = req as AppRequest;
    // Library edits and reads never wait for a run (each is one transaction of its own).
    if (isLibraryRequest(r)) return (await libraryOp(this.store, r)) as AppReplies[K];
    switch (r.op) {
      case 'import':
        return (await this.importScan(r.files, r.name, hooks)) as AppReplies[K];
      case 'demo':
        return (await this.createDemo(hooks)) as AppReplies[K];
      case 'demo-cone':
        return (await this.createConeDemo(hooks)) as AppReplies[K];
      case 'run':
        return (await this.exclusive(() => this.run(r.scanId, r.recipe, r.name, hooks, r.jobId))) as AppReplies[K];
      case 'queue-add':
        return (await addJob(r.job, this.store)) as AppReplies[K];
      case 'queue-settle':
        return (await updateJob(r.jobId, { state: r.state, ...(r.error !== undefined ? { error: r.error } : {}) }, this.store).then(() => null)) as AppReplies[K];
      case 'queue-requeue':
        return (await updateJob(r.jobId, { state: 'waiting', session: r.session }, this.store, true).then(() => null)) as AppReplies[K];
      case 'queue-forget':
        return (await deleteJobs(r.ids, this.store).then(() => null)) as AppReplies[K];
      case 'compare':
        return (await this.compare(r.resultId, r.against)) as AppReplies[K];
      case 'info':
        return (await this.info()) as AppReplies[K];
      case 'import-image':
        return (await this.exclusive(() => this.importImage(r.scanId, r.files, r.slice, hooks))) as AppReplies[K];
      case 'calibrate':
        return (await this.exclusive(() => calibrateScan(this.store, r.request, hooks))) as AppReplies[K];
      case 'import-model':
        return (await this.exclusive(() => this.importModel(r.files, hooks))) as AppReplies[K];
      case 'network-prior':
        return (await this.exclusive(async () => runNetworkPriorJob({ ws: await this.openWorkspace(), store: this.store, open: this.modelOpener() }, r.request, hooks))) as AppReplies[K];
      case 'knowledge':
        return (await this.knowledgeChange(() => changeKnowledge(this.store, r.request, hooks))) as AppReplies[K];
      case 'export-dicom':
        return (await exportDicomJob(this.store, r.resultId, hooks)) as AppReplies[K];
      case 'prior-check':
        return (await this.exclusive(async () => runPriorCheckJob({ ws: await this.openWorkspace(), store: this.store }, r.request, hooks))) as AppReplies[K];
    }
  }

  /** Reads the files, checks them and stores the scan (nothing is stored when anything fails). */
  async importScan(files: File[], name: string | undefined, hooks: RunHooks): Promise<ScanMeta> {
    hooks.onProgress?.(0, 'reading');
    const { scan, warnings } = await readScanFiles(files);
    throwIfCancelled(hooks.signal);
    hooks.onProgress?.(0.8, 'storing');
    const fileNames = files.map((f) => f.name);
    return saveScan({ name: name ?? fileNames.find((n) => /\.nrrd$/i.test(n)) ?? fileNames[0], scan, source: { type: 'file', fileNames }, warnings }, this.store);
  }

  /** Checks a network (ONNX + description) in the runtime and stores it (nothing is stored when it does not fit). */
  async importModel(files: File[], hooks: RunHooks): Promise<ModelMeta> {
    hooks.onProgress?.(0, 'checking the network');
    const open = this.modelOpener();
    const checked = await checkModelFiles(files, (bytes) => open(bytes, hooks.signal));
    throwIfCancelled(hooks.signal);
    hooks.onProgress?.(0.9, 'storing');
    return saveModel(checked, this.store);
  }

  private modelOpener(): NonNullable<CoordinatorOptions['openModel']> {
    const open = this.options.openModel;
    if (!open) throw new Error('this engine was started without a network runtime');
    return open;
  }

  /** Simulates and stores the demo scan with its ground truth. */
  async createDemo(hooks: RunHooks, settings: DemoSettings = DEMO): Promise<ScanMeta> {
    const { scan, reference } = await buildDemoScan(hooks, settings);
    throwIfCancelled(hooks.signal);
    const meta = await saveScan({
      name: DEMO_NAME,
      scan,
      reference,
      source: { type: 'demo', description: 'Simulated by the page: thorax phantom with arms, 60 keV, 200 000 photons per ray, detector cropped to 345 of 1100 channels.' },
    }, this.store);
    await saveSettings({ demoCreated: true }, this.store);
    return meta;
  }

  /** Simulates and stores the cone-beam demo scan with its reference volume. */
  async createConeDemo(hooks: RunHooks, settings: ConeDemoSettings = CONE_DEMO): Promise<ScanMeta> {
    const { scan, reference, referenceVolume } = await buildConeDemoScan(hooks, settings);
    throwIfCancelled(hooks.signal);
    const d = scan.geometry.detector;
    return saveScan({
      name: CONE_DEMO_NAME,
      scan,
      reference,
      referenceVolume,
      source: { type: 'demo', description: `Simulated by the page: 3D thorax phantom with arms, 60 keV, ${settings.photons} photons per ray, C-arm flat panel of ${d.channels} x ${d.rows} cells of ${d.pitch[0]} mm on a 200-degree arc (FOV radius 118 mm).` },
    }, this.store);
  }

  /**
   * Reconstructs a stored scan and stores the result with its comparison to the scan's reference.
   * With a queue job: the job is marked running, then done with the result in the same
   * transaction, or failed / cancelled.
   */
  async run(scanId: string, recipeInput: unknown, name: string | undefined, hooks: RunHooks, jobId?: string): Promise<ResultMeta> {
    if (!jobId) return this.reconstruct(scanId, recipeInput, name, hooks);
    await updateJob(jobId, { state: 'running' }, this.store);
    try {
      return await this.reconstruct(scanId, recipeInput, name, hooks, jobId);
    } catch (err) {
      const cancelled = err instanceof CancelledError;
      await updateJob(jobId, cancelled ? { state: 'cancelled' } : { state: 'failed', error: err instanceof InputError ? err.pageMessage : String((err as Error)?.message ?? err) }, this.store)
        .catch(() => undefined); // the run's own failure is what the page must hear
      throw err;
    }
  }

  private async reconstruct(scanId: string, recipeInput: unknown, name: string | undefined, hooks: RunHooks, jobId?: string): Promise<ResultMeta> {
    const t0 = performance.now();
    const recipe = validateRecipe(recipeInput);
    const { meta: scanMeta, scan, reference } = await loadScan(scanId, this.store);
    throwIfCancelled(hooks.signal);
    const inputs = { ...(await this.recipeInputs(recipe, scan.geometry.kind === 'cone')), masks: await loadMasks(this.store, scanMeta, maskNamesOf(recipe.knowledge)) };
    const ws = await this.openWorkspace();
    // The reconstruction takes the first 95% of the bar; checks and storing the rest.
    const out = await runRecipe(ws, scan, recipe, { ...hooks, onProgress: hooks.onProgress && ((f, stage) => hooks.onProgress!(0.95 * f, stage)) }, inputs);
    throwIfCancelled(hooks.signal);
    return this.checkAndStore(ws, { scanId, scanMeta, scan, reference }, out, {
      name: name ?? recipeLabel(recipe as unknown as Record<string, unknown>),
      recipe: recipe as unknown as Record<string, unknown>,
      t0,
      jobId,
    }, hooks);
  }

  /**
   * Adds an image file to a stored scan as a result (an earlier full-field reconstruction, a
   * DICOM CT slice or series, a user's model output): a volume for a cone-beam scan, else one
   * slice. It is compared with the scan's reference and checked against the measured data like
   * a reconstruction, and can then be a reference, a comparison or a prior.
   */
  async importImage(scanId: string, files: InputFile[], slice: number | undefined, hooks: RunHooks): Promise<ResultMeta> {
    const t0 = performance.now();
    const loaded = await loadScan(scanId, this.store);
    const { scan } = loaded;
    hooks.onProgress?.(0, 'reading');
    const g = scan.geometry;
    const fov = fovRadius(g);
    let out: { image: Image2D; volume?: Volume; warnings: string[]; report: Record<string, unknown> };
    let read: { name: string; fileNames: string[] };
    if (g.kind === 'cone') {
      if (slice !== undefined) throw new InputError('image import: a cone-beam scan takes the whole volume; leave the slice empty');
      const r = await readVolumeFiles(files, scan.muWater);
      const volume: Volume = { ...r.value, fovRadius: fov, fovHalfHeight: coneFovHalfHeight(g) };
      out = { image: axialSlice(volume, sliceAt(volume.grid, 0)), volume, warnings: r.warnings, report: {} };
      read = r;
    } else {
      const r = await readImageFiles(files, scan.muWater, slice);
      out = { image: { ...r.value, fovRadius: fov }, warnings: r.warnings, report: {} };
      read = r;
    }
    throwIfCancelled(hooks.signal);
    const ws = await this.openWorkspace();
    return this.checkAndStore(ws, { scanId, scanMeta: loaded.meta, scan, reference: loaded.reference }, out, {
      name: `Image file: ${read.name}`,
      recipe: { method: 'imported', fileNames: read.fileNames, ...(slice !== undefined ? { slice } : {}) },
      t0,
    }, hooks);
  }

  /**
   * Compares an image (or volume) with the scan's reference, re-projects it against the measured
   * data, and stores it as a result of the scan (warnings for values that cannot be trusted).
   */
  private async checkAndStore(
    ws: Workspace,
    s: { scanId: string; scanMeta: ScanMeta; scan: Scan; reference?: Image2D },
    out: { image: Image2D; volume?: Volume; warnings: string[]; report: Record<string, unknown> },
    what: { name: string; recipe: Record<string, unknown>; t0: number; jobId?: string },
    hooks: RunHooks,
  ): Promise<ResultMeta> {
    const warnings = [...out.warnings];
    const bad = countNonFinite(out.volume?.data ?? out.image.data);
    if (bad) warnings.push(`${bad} ${out.volume ? 'voxels' : 'pixels'} are not finite numbers (NaN or infinity): the ${out.volume ? 'volume' : 'image'} is not trustworthy`);
    let metrics: Comparison | null = null;
    if (s.reference) {
      try {
        metrics = compareImages(out.image, s.reference, out.image.fovRadius);
      } catch (err) {
        if (!(err instanceof InputError)) throw err;
        warnings.push(`no comparison with the reference: ${err.message}`);
      }
    }
    let volumeMetrics: VolumeComparison | null | undefined;
    if (out.volume) volumeMetrics = s.scanMeta.referenceVolume && !bad ? await this.compareWithReferenceVolume(s.scanId, out.volume, hooks) : null;
    hooks.onProgress?.(0.97, 'checking against the measured data');
    const checkHooks = { signal: hooks.signal };
    const residual = out.volume ? await volumeDataResidual(ws, out.volume, s.scan, checkHooks) : await dataResidual(ws, out.image, s.scan, checkHooks);
    hooks.onProgress?.(1, 'storing');
    const seconds = (performance.now() - what.t0) / 1000;
    const job = what.jobId;
    return saveResult({
      scanId: s.scanId,
      name: what.name,
      recipe: what.recipe,
      warnings,
      report: out.report,
      metrics,
      residual,
      seconds,
      ...(out.volume ? { volumeMetrics } : {}),
    }, out.image, this.store, out.volume, job ? (meta, tx) => changeJob(tx, job, { state: 'done', resultId: meta.id, seconds }) : undefined);
  }

  /**
   * Images a recipe names from storage: the prior of method "prior" taken from a stored result
   * (its volume for a cone-beam scan, else its image; any grid, resampled by the method).
   */
  private async recipeInputs(recipe: Recipe, cone: boolean): Promise<RecipeInputs> {
    const p = recipe.prior;
    if (p?.source !== 'image') return {};
    if (!p.resultId) throw new InputError('recipe prior: the page takes a prior image from a stored result; choose one');
    let meta: ResultMeta;
    try {
      meta = await getResultMeta(p.resultId, this.store);
    } catch (err) {
      if (!(err instanceof RecordError)) throw err;
      throw new InputError(`recipe prior: the result "${p.name ?? p.resultId}" is no longer stored (${err.message})`);
    }
    if (cone) {
      if (!meta.volume) throw new InputError(`recipe prior: result "${meta.name}" holds a 2D image; a cone-beam scan needs a volume as its prior`);
      return { priorVolume: (await loadResultVolume(p.resultId, this.store)).volume };
    }
    if (meta.volume) throw new InputError(`recipe prior: result "${meta.name}" is a volume; a 2D scan needs an image as its prior`);
    return { prior: (await loadResultImage(p.resultId, this.store)).image };
  }

  /** The volume against the scan's reference volume, inside and outside its FOV cylinder. */
  private async compareWithReferenceVolume(scanId: string, volume: Volume, hooks: RunHooks): Promise<VolumeComparison> {
    hooks.onProgress?.(0.96, 'comparing with the reference volume');
    const reference = await loadReferenceVolume(scanId, this.store);
    return compareVolumes(volume, reference, { fovRadius: volume.fovRadius, fovHalfHeight: volume.fovHalfHeight });
  }

  /** Compares a stored result with its scan's reference image or with another result. */
  async compare(resultId: string, against: CompareTarget): Promise<Comparison> {
    const { meta, image } = await loadResultImage(resultId, this.store);
    let reference: Image2D;
    if (against.kind === 'reference') {
      const s = await loadScan(meta.scanId, this.store);
      if (!s.reference) throw new InputError(`compare: scan of result "${meta.name}" has no reference image`);
      reference = s.reference;
    } else {
      reference = (await loadResultImage(against.id, this.store)).image;
    }
    return compareImages(image, reference, image.fovRadius);
  }

  async info(): Promise<EngineInfo> {
    const ws = await this.openWorkspace();
    return { workers: ws.parallelism, sharedMemory: this.options.sharedMemory };
  }

  private openWorkspace(): Promise<Workspace> {
    this.workspace ??= this.options.openWorkspace();
    const ws = this.workspace;
    ws.catch(() => {
      if (this.workspace === ws) this.workspace = undefined;
    });
    return ws;
  }

  /** Runs a knowledge change after the earlier ones (each re-reads the scan it changes). */
  private knowledgeChange<T>(job: () => Promise<T>): Promise<T> {
    const next = this.knowledgeTurn.then(job, job);
    this.knowledgeTurn = next.catch(() => undefined);
    return next;
  }

  /** Runs `job` after every earlier exclusive job has finished (runs share one workspace). */
  private exclusive<T>(job: () => Promise<T>): Promise<T> {
    const next = this.turn.then(job, job);
    this.turn = next.catch(() => undefined);
    return next;
  }
}

function countNonFinite(d: Float32Array): number {
  let n = 0;
  for (let i = 0; i < d.length; i++) if (!Number.isFinite(d[i])) n++;
  return n;
}
