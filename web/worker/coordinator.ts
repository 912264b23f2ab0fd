// The coordinator: imports, the demo, recipe runs and comparisons, off the page's main thread.
// It is the only writer of scans and results; runs take turns on one engine workspace.
import { compareImages, type Comparison } from '../core/compare';
import { CancelledError, InputError, throwIfCancelled } from '../core/errors';
import type { Workspace } from '../core/engine/workspace';
import type { Image2D } from '../core/image';
import { sameGrid } from '../core/resample';
import { axialSlice, sliceAt, type Volume } from '../core/volume';
import { coneFovHalfHeight } from '../core/geometry/cone';
import { viewCount } from '../core/geometry/types';
import { fovRadius } from '../core/geometry/view-vectors';
import { browserBudget } from './browser-budget';
import { readWholeScan } from '../core/projection-source';
import type { Recipe } from '../core/recipe/recipe';
import type { RecipeInputs } from '../core/recipe/run';
import { checkReduction, isIdentity, reduceSource } from '../core/reduction';
import { planResidual, ResidualTap } from '../core/residual-sample';
import type { RunHooks } from '../core/run-hooks';
import { pageStore, type UseStore } from '../store/db';
import { storedProjections } from '../store/projections';
import { RecordError, type ModelMeta, type ResultMeta, type ScanMeta } from '../store/records';
import { getResultMeta, loadResultImage, loadResultVolume } from '../store/results';
import { loadReferenceVolume, loadScan, loadScanReference, saveScan } from '../store/scans';
import { saveSettings } from '../store/settings';
import type { NetworkRunner } from '../core/model/runner';
import { saveModel } from '../store/models';
import { addJob, deleteJobs, updateJob } from '../store/jobs';
import type { AppReplies, AppRequest, CompareTarget, EngineInfo } from './app-protocol';
import { buildConeDemoScan, CONE_DEMO, CONE_DEMO_NAME, type ConeDemoSettings } from './demo-cone-scan';
import { buildDemoScan, DEMO, DEMO_NAME, type DemoSettings } from './demo-scan';
import { checkModelFiles } from './import-model-files';
import { negativeCount, negativeWarning, openScanFiles, type InputFile } from './import-scan';
import { readImageFiles, readVolumeFiles } from './read-image-files';
import { runNetworkPriorJob } from './network-prior-job';
import { runPriorCheckJob } from './prior-check-job';
import { calibrateScan } from './calibrate-job';
import { runRecipeJob, storeImageResult } from './run-job';
import { storeVolumeResult } from './volume-result';
import { isLibraryRequest, libraryOp } from './library-ops';
import { exportDicomJob } from './export-dicom-job';
import { changeKnowledge } from './knowledge-ops';

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
        return (await this.importScan(r.files, r.name, r.reduce, hooks)) as AppReplies[K];
      case 'demo':
        return (await this.createDemo(hooks)) as AppReplies[K];
      case 'demo-cone':
        return (await this.createConeDemo(hooks)) as AppReplies[K];
      case 'run':
        return (await this.exclusive(() => this.run(r.scanId, r.recipe, r.name, hooks, r.jobId, r.budget))) as AppReplies[K];
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

  /**
   * Reads the files (a chunk of views at a time when the format allows), reduces them as asked
   * (binning, view step, row range), checks and stores the scan in one transaction: nothing is
   * stored when anything fails, is cancelled, or the page goes away meanwhile.
   */
  async importScan(files: File[], name: string | undefined, reduceInput: unknown, hooks: RunHooks): Promise<ScanMeta> {
    hooks.onProgress?.(0, 'reading');
    const opened = await openScanFiles(files);
    const g = opened.source.geometry;
    const reduce = checkReduction(reduceInput, g, 'import reduce');
    const source = reduceSource(opened.source, reduce);
    throwIfCancelled(hooks.signal);
    const fileNames = files.map((f) => f.name);
    let negative = 0, values = 0;
    return saveScan({
      name: name ?? fileNames.find((n) => /\.nrrd$/i.test(n)) ?? fileNames[0],
      scan: source,
      source: { type: 'file', fileNames },
      warnings: opened.warnings,
      ...(isIdentity(reduce) ? {} : { reduction: { applied: reduce, from: { channels: g.detector.channels, rows: g.detector.rows, views: viewCount(g) } } }),
    }, this.store, {
      ...hooks,
      inspect: (data) => {
        negative += negativeCount(data);
        values += data.length;
      },
      lateWarnings: () => [...opened.lateWarnings(), ...negativeWarning(negative, values)],
    });
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
   * transaction, or failed / cancelled. `budget`: the page's memory budget (bytes; else half of
   * what the browser reports).
   */
  async run(scanId: string, recipe: unknown, name: string | undefined, hooks: RunHooks, jobId?: string, budget?: number): Promise<ResultMeta> {
    if (jobId) await updateJob(jobId, { state: 'running' }, this.store);
    try {
      const ws = await this.openWorkspace();
      return await runRecipeJob({
        ws, store: this.store, sharedMemory: this.options.sharedMemory,
        budget: budget !== undefined ? { bytes: budget, source: 'the page\'s memory budget' } : browserBudget(),
        inputs: (r: Recipe, cone: boolean) => this.recipeInputs(r, cone),
      }, { scanId, recipe, name, jobId }, hooks);
    } catch (err) {
      const cancelled = err instanceof CancelledError;
      if (jobId) {
        await updateJob(jobId, cancelled ? { state: 'cancelled' } : { state: 'failed', error: err instanceof InputError ? err.pageMessage : String((err as Error)?.message ?? err) }, this.store)
          .catch(() => undefined); // the run's own failure is what the page must hear
      }
      throw err;
    }
  }

  /**
   * Adds an image file to a stored scan as a result (an earlier full-field reconstruction, a
   * DICOM CT slice or series, a user's model output): a volume for a cone-beam scan, else one
   * slice. It is compared with the scan's reference and checked against the measured data like
   * a reconstruction, and can then be a reference, a comparison or a prior.
   */
  async importImage(scanId: string, files: InputFile[], slice: number | undefined, hooks: RunHooks): Promise<ResultMeta> {
    const t0 = performance.now();
    const { meta, reference } = await loadScanReference(scanId, this.store);
    hooks.onProgress?.(0, 'reading');
    const g = meta.geometry;
    const fov = fovRadius(g);
    const ws = await this.openWorkspace();
    const recipe = (fileNames: string[]) => ({ method: 'imported', fileNames, ...(slice !== undefined ? { slice } : {}) });
    if (g.kind !== 'cone') {
      const r = await readImageFiles(files, meta.muWater, slice);
      throwIfCancelled(hooks.signal);
      const scan = await loadScan(scanId, this.store, hooks.signal);
      return storeImageResult({ ws, store: this.store }, { scanId, scan: scan.scan, reference }, { image: { ...r.value, fovRadius: fov }, warnings: r.warnings, report: {} },
        { name: `Image file: ${r.name}`, recipe: recipe(r.fileNames), t0 }, hooks);
    }
    if (slice !== undefined) throw new InputError('image import: a cone-beam scan takes the whole volume; leave the slice empty');
    const r = await readVolumeFiles(files, meta.muWater);
    const volume: Volume = { ...r.value, fovRadius: fov, fovHalfHeight: coneFovHalfHeight(g) };
    throwIfCancelled(hooks.signal);
    // The measured data pass through the residual's tap once, a chunk of views at a time.
    const plan = planResidual(volume.grid, g);
    const tap = new ResidualTap(storedProjections(meta, this.store), plan);
    await readWholeScan(tap.source, hooks.signal).then(() => undefined);
    const referenceVolume = meta.referenceVolume ? await loadReferenceVolume(scanId, this.store) : undefined;
    return storeVolumeResult(
      { ws, store: this.store, scanId, scanMeta: meta, reference, referenceVolume, residual: { plan, tap }, hooks },
      { name: `Image file: ${r.name}`, recipe: recipe(r.fileNames), t0 },
      async () => ({ image: axialSlice(volume, sliceAt(volume.grid, 0)), volume, warnings: r.warnings, report: {} }),
    );
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

  /**
   * Compares a stored result with its scan's reference image or with another result, leaving out
   * the pixels either does not determine (DBP; the reference's only when it is on the same grid).
   */
  async compare(resultId: string, against: CompareTarget): Promise<Comparison> {
    const { meta, image, undetermined } = await loadResultImage(resultId, this.store);
    let reference: Image2D, exclude = undetermined;
    if (against.kind === 'reference') {
      const s = await loadScanReference(meta.scanId, this.store);
      if (!s.reference) throw new InputError(`compare: scan of result "${meta.name}" has no reference image`);
      reference = s.reference;
    } else {
      const other = await loadResultImage(against.id, this.store);
      reference = other.image;
      if (other.undetermined && sameGrid(image.grid, reference.grid)) exclude = exclude ? exclude.map((v, i) => v | other.undetermined![i]) : other.undetermined;
    }
    return compareImages(image, reference, image.fovRadius, exclude);
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
