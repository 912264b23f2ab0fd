// Storing a cone-beam result while its volume leaves the engine slab by slab: each slab is
// written to storage, compared with the scan's reference volume, counted for non-finite voxels
// and averaged for the data residual, and never held whole. Everything goes into ONE transaction,
// opened when the first slab arrives (after the reconstruction has read the scan) and committed
// with the result's description; a failure or a cancel leaves nothing.
import { VolumeComparer, type VolumeComparison } from '../core/compare-volume';
import type { Workspace } from '../core/engine/workspace';
import { InputError, throwIfCancelled } from '../core/errors';
import type { Image2D } from '../core/image';
import type { RecipeResult } from '../core/recipe/run';
import { VolumeAverager, type ResidualPlan, type ResidualTap } from '../core/residual-sample';
import type { RunHooks } from '../core/run-hooks';
import type { Volume } from '../core/volume';
import { volumeDataResidual } from '../core/volume-residual';
import { teeSinks, type VolumeInfo, type VolumeSink } from '../core/volume-sink';
import { deferredTransaction, type DeferredTx, type UseStore } from '../store/db';
import { changeJob } from '../store/jobs';
import { RecordError, type ResultMeta, type ScanMeta } from '../store/records';
import { resultRecords } from '../store/results';
import { compared } from './prior-steps';
import { newId } from '../store/scans';
import { SlabWriter } from '../store/volumes';

export interface VolumeResultJob {
  ws: Workspace;
  store: UseStore;
  scanId: string;
  scanMeta: ScanMeta;
  /** The scan's reference image and volume, when it has them. */
  reference?: Image2D;
  referenceVolume?: Volume;
  /** The residual's sampling, and the tap that caught the sampled views as the run read them. */
  residual: { plan: ResidualPlan; tap: ResidualTap };
  hooks: RunHooks;
}

export interface ResultDescription {
  name: string;
  recipe: Record<string, unknown>;
  t0: number;
  /** The page's queue job, marked done in the result's own transaction. */
  jobId?: string;
}

/** What the slabs tell on their way to storage. */
class SlabChecks implements VolumeSink {
  nonFinite = 0;
  constructor(private readonly comparer?: VolumeComparer) {}
  async write(k0: number, slab: Float32Array): Promise<void> {
    for (let i = 0; i < slab.length; i++) if (!Number.isFinite(slab[i])) this.nonFinite++;
    this.comparer?.addSlices(k0, slab);
  }
}

/**
 * Runs `produce` (a reconstruction that hands its volume to the sink it is given, or returns it
 * whole) and stores the result: volume slabs, central slice, comparisons, residual, description.
 */
export async function storeVolumeResult(
  job: VolumeResultJob, desc: ResultDescription,
  produce: (sink: (info: VolumeInfo) => VolumeSink) => Promise<Pick<RecipeResult, 'image' | 'volume' | 'warnings' | 'report'>>,
): Promise<ResultMeta> {
  const { ws, store, hooks } = job;
  const tx = deferredTransaction(store);
  const id = newId();
  const notes: string[] = [];
  let parts: { writer: SlabWriter; averager: VolumeAverager; checks: SlabChecks; comparer?: VolumeComparer } | undefined;
  const sinkFor = (info: VolumeInfo): VolumeSink => {
    if (parts) throw new Error('a run handed over two volumes');
    const comparer = job.referenceVolume ? referenceComparer(info, job.referenceVolume, notes) : undefined;
    parts = { writer: new SlabWriter('result', id, info, (k, v) => tx.put(k, v)), averager: new VolumeAverager(info, job.residual.plan.factor), checks: new SlabChecks(comparer), comparer };
    return teeSinks(parts.writer, parts.averager, parts.checks);
  };
  try {
    const out = await produce(sinkFor);
    if (out.volume) await feedWhole(out.volume, sinkFor(out.volume));
    if (!parts) throw new Error('the run gave no volume');
    throwIfCancelled(hooks.signal);
    const info = parts.writer.finish();
    const warnings = [...out.warnings, ...notes];
    const bad = parts.checks.nonFinite;
    if (bad) warnings.push(`${bad} voxels are not finite numbers (NaN or infinity): the volume is not trustworthy`);
    const metrics = compared(out.image, job.reference, warnings);
    const volumeMetrics: VolumeComparison | null = parts.comparer && !bad ? parts.comparer.result() : null;
    hooks.onProgress?.(0.97, 'checking against the measured data');
    const residual = await volumeDataResidual(ws, parts.averager.volume(), job.residual.tap.measured(job.scanMeta.muWater), { signal: hooks.signal });
    if (job.residual.plan.note) residual.sampled = job.residual.plan.note;
    throwIfCancelled(hooks.signal);
    hooks.onProgress?.(1, 'storing');
    const seconds = (performance.now() - desc.t0) / 1000;
    const { meta, entries } = resultRecords({
      scanId: job.scanId, name: desc.name, recipe: desc.recipe, warnings, report: out.report, metrics, residual, seconds, volumeMetrics,
    }, out.image, {}, { id, info });
    // A run that ends after its scan was deleted stores nothing.
    if ((await tx.get(`scan/${job.scanId}`)) === undefined) throw new RecordError('the scan was deleted while its result was being made; nothing was stored');
    for (const [k, v] of entries) await tx.put(k, v);
    if (desc.jobId) await markJobDone(tx, desc.jobId, meta.id, seconds);
    await tx.commit();
    return meta;
  } catch (err) {
    await tx.abort(err);
    throw err;
  }
}

/** The queue job marked done (store/jobs.ts changeJob) in the streamed transaction of its result. */
async function markJobDone(tx: DeferredTx, jobId: string, resultId: string, seconds: number): Promise<void> {
  const writes: Array<Promise<void>> = [];
  await changeJob({
    get: (key) => tx.get(key),
    put: (key, value) => { writes.push(tx.put(key, value)); },
  }, jobId, { state: 'done', resultId, seconds });
  await Promise.all(writes);
}

/** A comparer with the scan's reference volume, or none (with a warning) when the two do not compare. */
function referenceComparer(info: VolumeInfo, reference: Volume, warnings: string[]): VolumeComparer | undefined {
  try {
    return new VolumeComparer(info, reference, { fovRadius: info.fovRadius, fovHalfHeight: info.fovHalfHeight });
  } catch (err) {
    if (!(err instanceof InputError)) throw err;
    warnings.push(`no comparison with the reference volume: ${err.message}`);
    return undefined;
  }
}

/** A whole volume into a sink, in slabs of 16 MiB. */
async function feedWhole(v: Volume, sink: VolumeSink): Promise<void> {
  const slice = v.grid.nx * v.grid.ny, step = Math.max(1, Math.floor(4 * 2 ** 20 / slice));
  for (let k = 0; k < v.grid.nz; k += step) await sink.write(k, v.data.subarray(k * slice, Math.min(v.grid.nz, k + step) * slice));
}

