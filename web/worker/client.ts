// The page's one door to the engine. Every call takes an AbortSignal and reports progress; calls
// run in the coordinator worker, so the main thread never waits on a kernel. When a worker dies
// the engine is torn down, the calls in flight fail with EngineStoppedError (never hang), and
// the next call starts a fresh engine. A cancel the engine does not answer within
// CANCEL_GRACE_MS also restarts it (a running Wasm call cannot be interrupted otherwise).
import { CancelledError, InputError } from '../core/errors';
import { StorageFullError } from '../store/quota';
import type { AppReplies, AppRequest, CompareTarget, EngineInfo, FromCoordinator, WireError } from './app-protocol';
import type { NewJob } from '../store/jobs';
import type { CalibrationRequest, KnowledgeRequest, NetworkPriorRequest, PriorCheckRequest, StoredVolumeRef, VolumePlane } from './app-protocol';
import type { Reduction } from '../core/reduction';

/** What the client needs of a Worker (a real Web Worker, or a stand-in in tests). */
export interface WorkerLike {
  postMessage(msg: unknown, transfer?: Transferable[]): void;
  addEventListener(type: 'message' | 'error' | 'messageerror', handler: (e: Event) => void): void;
  terminate(): void;
}

/** Starts the engine: the coordinator, and every worker whose death should restart the engine. */
export type EngineStarter = () => { coordinator: WorkerLike; watched: WorkerLike[] };

export interface Progress {
  /** Fraction done, 0 to 1. */
  fraction: number;
  /** Short stage name ("filter", "backproject", ...). */
  stage: string;
  /** Milliseconds since the call started. */
  elapsedMs: number;
}

export interface CallOptions {
  signal?: AbortSignal;
  onProgress?: (p: Progress) => void;
}

/** The engine stopped (a worker crashed, or was restarted to stop a run); the call did not finish. */
export class EngineStoppedError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'EngineStoppedError';
  }
}

/** Milliseconds a cancelled call may take to stop before the engine is restarted. */
export const CANCEL_GRACE_MS = 3000;

interface Pending {
  resolve: (v: unknown) => void;
  reject: (e: Error) => void;
  onProgress?: (p: Progress) => void;
  started: number;
}

interface Engine {
  coordinator: WorkerLike;
  watched: WorkerLike[];
  pending: Map<number, Pending>;
}

/** Rebuilds an error sent by the coordinator as the class the page knows. */
export function fromWire(e: WireError): Error {
  if (e.name === 'InputError') return new InputError(e.message);
  if (e.name === 'CancelledError') return new CancelledError(e.message);
  if (e.name === 'StorageFullError') return new StorageFullError(e.message, (e.details as StorageFullError['largest']) ?? []);
  const err = new Error(e.message);
  err.name = e.name;
  return err;
}

export class EngineClient {
  private engine?: Engine;
  private nextId = 1;

  constructor(private readonly starter: EngineStarter) {}

  /** Reads files into a stored scan. */
  importScan(files: File[], options: CallOptions & { name?: string; reduce?: Reduction } = {}): Promise<AppReplies['import']> {
    return this.call({ op: 'import', files, name: options.name, reduce: options.reduce }, options);
  }

  /** Simulates and stores the demo scan. */
  createDemo(options: CallOptions = {}): Promise<AppReplies['demo']> {
    return this.call({ op: 'demo' }, options);
  }

  /** Simulates and stores the cone-beam demo scan (made only when asked for). */
  createConeDemo(options: CallOptions = {}): Promise<AppReplies['demo-cone']> {
    return this.call({ op: 'demo-cone' }, options);
  }

  /** Runs a recipe on a stored scan; resolves to the stored result. With a queue job, the job's record follows the run. */
  run(scanId: string, recipe: unknown, options: CallOptions & { name?: string; jobId?: string; budget?: number } = {}): Promise<AppReplies['run']> {
    return this.call({ op: 'run', scanId, recipe, name: options.name, budget: options.budget, ...(options.jobId ? { jobId: options.jobId } : {}) }, options);
  }

  /** Stores a queued job (so a reload cannot lose it). */
  queueJob(job: NewJob, options: CallOptions = {}): Promise<AppReplies['queue-add']> {
    return this.call({ op: 'queue-add', job }, options);
  }

  /** Records that a stored job failed or was cancelled (a job already finished stays as it is). */
  settleJob(id: string, state: 'failed' | 'cancelled', error?: string, options: CallOptions = {}): Promise<null> {
    return this.call({ op: 'queue-settle', jobId: id, state, ...(error !== undefined ? { error } : {}) }, options);
  }

  /** Puts a stored job back in line for this page (an interrupted one run again). */
  requeueJob(id: string, session: string, options: CallOptions = {}): Promise<null> {
    return this.call({ op: 'queue-requeue', jobId: id, session }, options);
  }

  /** Forgets stored jobs (their results stay). */
  forgetJobs(ids: string[], options: CallOptions = {}): Promise<null> {
    return this.call({ op: 'queue-forget', ids }, options);
  }

  /** Image-quality figures of a result against its scan's reference or another result. */
  compare(resultId: string, against: CompareTarget, options: CallOptions = {}): Promise<AppReplies['compare']> {
    return this.call({ op: 'compare', resultId, against }, options);
  }

  /** Adds an image file to a stored scan as a result (checked against its data and reference). */
  importImage(scanId: string, files: File[], slice?: number, options: CallOptions = {}): Promise<AppReplies['import-image']> {
    return this.call({ op: 'import-image', scanId, files, ...(slice !== undefined ? { slice } : {}) }, options);
  }

  /** Sets a scan's mu_water (by hand or from a marked region) and updates its results' HU figures. */
  calibrate(request: CalibrationRequest, options: CallOptions = {}): Promise<AppReplies['calibrate']> {
    return this.call({ op: 'calibrate', request }, options);
  }

  /** Changes a scan's knowledge (known regions, outline), checked first; resolves to the scan as stored. */
  changeKnowledge(request: KnowledgeRequest, options: CallOptions = {}): Promise<AppReplies['knowledge']> {
    return this.call({ op: 'knowledge', request }, options);
  }

  /** Checks a network (its .onnx file and .json description) in the runtime and stores it. */
  importModel(files: File[], options: CallOptions = {}): Promise<AppReplies['import-model']> {
    return this.call({ op: 'import-model', files }, options);
  }

  /** Runs a stored network on a stored scan, checks its output against the data; stores what it made. */
  runNetworkPrior(request: NetworkPriorRequest, options: CallOptions = {}): Promise<AppReplies['network-prior']> {
    return this.call({ op: 'network-prior', request }, options);
  }

  /** Checks a stored result or an image file as a prior against a stored scan; stores what it made. */
  checkPrior(request: PriorCheckRequest, options: CallOptions = {}): Promise<AppReplies['prior-check']> {
    return this.call({ op: 'prior-check', request }, options);
  }

  /** What the page draws of a stored scan: its analysed sinogram row, truncation report and reference image. */
  scanOverview(scanId: string, options: CallOptions = {}): Promise<AppReplies['scan-overview']> {
    return this.call({ op: 'scan-overview', scanId }, options);
  }

  /** One plane of a stored volume (read slab by slab in the worker: the volume never comes here). */
  volumePlane(volume: StoredVolumeRef, plane: VolumePlane, index: number, options: CallOptions = {}): Promise<AppReplies['volume-plane']> {
    return this.call({ op: 'volume-plane', volume, plane, index }, options);
  }

  /** A stored volume as an NRRD file, for saving (a Blob the browser may keep on disk). */
  volumeFile(volume: StoredVolumeRef, options: CallOptions = {}): Promise<AppReplies['volume-file']> {
    return this.call({ op: 'volume-file', volume }, options);
  }

  /** Renames a stored scan. */
  renameScan(scanId: string, name: string, options: CallOptions = {}): Promise<AppReplies['rename-scan']> {
    return this.call({ op: 'rename-scan', scanId, name }, options);
  }

  /** Replaces a stored scan's geometry (validated against its data). */
  setScanGeometry(scanId: string, geometry: unknown, options: CallOptions = {}): Promise<AppReplies['set-geometry']> {
    return this.call({ op: 'set-geometry', scanId, geometry }, options);
  }

  /** Deletes a stored scan with its results. */
  deleteScan(scanId: string, options: CallOptions = {}): Promise<AppReplies['delete-scan']> {
    return this.call({ op: 'delete-scan', scanId }, options);
  }

  /** Renames a stored result. */
  renameResult(resultId: string, name: string, options: CallOptions = {}): Promise<AppReplies['rename-result']> {
    return this.call({ op: 'rename-result', resultId, name }, options);
  }

  /** Deletes a stored result. */
  deleteResult(resultId: string, options: CallOptions = {}): Promise<AppReplies['delete-result']> {
    return this.call({ op: 'delete-result', resultId }, options);
  }

  /** Deletes a stored network. */
  deleteModel(modelId: string, options: CallOptions = {}): Promise<AppReplies['delete-model']> {
    return this.call({ op: 'delete-model', modelId }, options);
  }

  /** A stored result as a DICOM CT series (one .dcm, or a ZIP of one file per slice), encoded in the worker. */
  exportDicom(resultId: string, options: CallOptions = {}): Promise<AppReplies['export-dicom']> {
    return this.call({ op: 'export-dicom', resultId }, options);
  }

  /** Pool size and memory mode. */
  info(options: CallOptions = {}): Promise<EngineInfo> {
    return this.call({ op: 'info' }, options);
  }

  /** Stops every worker; calls in flight fail. */
  dispose(): void {
    this.stop('the page closed the engine');
  }

  private call<K extends AppRequest['op']>(req: Extract<AppRequest, { op: K }>, options: CallOptions): Promise<AppReplies[K]> {
    const { signal } = options;
    if (signal?.aborted) return Promise.reject(new CancelledError());
    const engine = this.ensureEngine();
    const id = this.nextId++;
    return new Promise<AppReplies[K]>((resolve, reject) => {
      let grace: ReturnType<typeof setTimeout> | undefined;
      const onAbort = () => {
        engine.coordinator.postMessage({ op: 'cancel', id });
        grace = setTimeout(() => {
          if (!engine.pending.has(id)) return;
          engine.pending.get(id)!.reject(new CancelledError());
          engine.pending.delete(id);
          this.stop('the engine was restarted to stop a cancelled run');
        }, CANCEL_GRACE_MS);
      };
      const settle = () => {
        signal?.removeEventListener('abort', onAbort);
        if (grace) clearTimeout(grace);
      };
      engine.pending.set(id, {
        resolve: (v) => {
          settle();
          resolve(v as AppReplies[K]);
        },
        reject: (e) => {
          settle();
          reject(e);
        },
        onProgress: options.onProgress,
        started: performance.now(),
      });
      signal?.addEventListener('abort', onAbort, { once: true });
      engine.coordinator.postMessage({ ...req, id });
    });
  }

  private ensureEngine(): Engine {
    if (this.engine) return this.engine;
    const { coordinator, watched } = this.starter();
    const engine: Engine = { coordinator, watched, pending: new Map() };
    coordinator.addEventListener('message', (e) => this.receive(engine, (e as MessageEvent<FromCoordinator>).data));
    for (const w of [coordinator, ...watched]) {
      w.addEventListener('error', (e) => {
        e.preventDefault?.();
        const what = (e as ErrorEvent).message || 'a worker failed';
        if (this.engine === engine) this.stop(`the reconstruction engine stopped unexpectedly (${what}); it has been restarted`);
      });
      w.addEventListener('messageerror', () => {
        if (this.engine === engine) this.stop('a message from the engine could not be read; the engine has been restarted');
      });
    }
    this.engine = engine;
    return engine;
  }

  private receive(engine: Engine, msg: FromCoordinator): void {
    const p = engine.pending.get(msg.id);
    if (!p) return;
    if (msg.type === 'progress') {
      p.onProgress?.({ fraction: msg.fraction, stage: msg.stage, elapsedMs: performance.now() - p.started });
      return;
    }
    engine.pending.delete(msg.id);
    if (msg.type === 'done') p.resolve(msg.value);
    else p.reject(fromWire(msg.error));
  }

  /** Terminates the workers and fails every call in flight. */
  private stop(reason: string): void {
    const engine = this.engine;
    if (!engine) return;
    this.engine = undefined;
    for (const w of [engine.coordinator, ...engine.watched]) w.terminate();
    for (const p of engine.pending.values()) p.reject(new EngineStoppedError(`${reason}. The run did not finish and nothing was stored.`));
    engine.pending.clear();
  }
}
