// Reconstructions in storage: description and pixels written in one transaction.
import { get, getMany, type UseStore } from 'idb-keyval';
import { InputError } from '../core/errors';
import type { Image2D, ImageGrid } from '../core/image';
import type { Volume } from '../core/volume';
import { keysWithPrefix, pageStore } from './db';
import { checkRecord, keys, RecordError, SCHEMA_VERSION, type ResultData, type ResultMeta } from './records';
import { checkName, newId } from './scans';
import { patchRecord, putResultEntries, transact, type Tx } from './transact';
import { loadVolume, slabPrefix, volumeEntries, type StoredVolumeInfo } from './volumes';

/** A volume whose slabs were already written (SlabWriter) under result id `id`. */
export interface StoredVolume {
  id: string;
  info: StoredVolumeInfo;
}

export type NewResult = Omit<ResultMeta, 'schema' | 'kind' | 'id' | 'createdAt' | 'bytes' | 'grid' | 'muWater' | 'fovRadius' | 'volume'>;

/** Arrays kept with a result's pixels (ResultData): a consistency report's, a DBP result's undetermined mask. */
export type ResultExtras = Partial<Pick<ResultData, 'consistency' | 'undetermined'>>;

/**
 * Stores a reconstruction (and, for cone-beam scans, its volume in slabs) in one transaction,
 * provided its scan is still stored, with what `along` writes in the same transaction (e.g. its
 * queue job marked done) and the arrays of `extra` beside its pixels; returns its description.
 */
export async function saveResult(
  input: NewResult, image: Image2D, store: UseStore = pageStore(), volume?: Volume, along?: (meta: ResultMeta, tx: Tx) => Promise<void>,
  extra: ResultExtras = {},
): Promise<ResultMeta> {
  const { meta, entries } = resultRecords(input, image, extra, volume);
  await putResultEntries(input.scanId, entries, store, along && ((tx) => along(meta, tx)));
  return meta;
}

/** Throws unless `mask` is a 0/1 mask of the grid's pixels (`what` names it in the message). */
function checkMask(mask: unknown, grid: ImageGrid, what: string, fail: (m: string) => Error): asserts mask is Uint8Array {
  const n = grid.nx * grid.ny;
  if (!(mask instanceof Uint8Array)) throw fail(`${what}: got ${Object.prototype.toString.call(mask)}, expected a Uint8Array of ${n} pixels (1 = not determined)`);
  if (mask.length !== n) throw fail(`${what}: got ${mask.length} pixels, expected ${n} (the image's ${grid.nx} x ${grid.ny})`);
  const bad = mask.findIndex((v) => v > 1);
  if (bad >= 0) throw fail(`${what}: pixel ${bad} holds ${mask[bad]}, expected 0 or 1`);
}

/** The records of a new result (several are written in one transaction with putResultEntries). */
export function resultRecords(
  input: NewResult, image: Image2D, extra: ResultExtras = {}, volume?: Volume | StoredVolume,
): { meta: ResultMeta; entries: Array<[string, unknown]> } {
  if (extra.undetermined !== undefined) checkMask(extra.undetermined, image.grid, 'result undetermined mask', (m) => new InputError(m, { field: 'undetermined' }));
  const stored = volume && !('data' in volume) ? volume : undefined;
  const id = stored?.id ?? newId();
  const slabs = volume && 'data' in volume ? volumeEntries('result', id, volume) : stored ? { info: stored.info, entries: [] } : undefined;
  const c = extra.consistency;
  const meta: ResultMeta = {
    ...input,
    schema: SCHEMA_VERSION,
    kind: 'result',
    id,
    name: checkName(input.name),
    createdAt: Date.now(),
    grid: image.grid,
    muWater: image.muWater,
    fovRadius: image.fovRadius,
    bytes: image.data.byteLength + (slabs ? 4 * slabs.info.grid.nx * slabs.info.grid.ny * slabs.info.grid.nz : 0) + (c ? c.residual.byteLength + c.flagged.byteLength + (c.map?.byteLength ?? 0) : 0) + (extra.undetermined?.byteLength ?? 0),
    ...(slabs ? { volume: slabs.info } : {}),
  };
  const data: ResultData = { schema: SCHEMA_VERSION, kind: 'result-data', id, data: image.data, ...extra };
  return { meta, entries: [[keys.result(id), meta], [keys.resultData(id), data], ...(slabs?.entries ?? [])] };
}

/** A stored result's volume (cone-beam scans); throws RecordError when it has none or a slab is damaged. */
export async function loadResultVolume(id: string, store: UseStore = pageStore()): Promise<{ meta: ResultMeta; volume: Volume }> {
  const meta = await getResultMeta(id, store);
  if (!meta.volume) throw new RecordError(`result "${meta.name}" holds an image, not a volume`);
  return { meta, volume: await loadVolume('result', id, meta.volume, store) };
}

/** Stored results, oldest first; only those of `scanId` when given. */
export async function listResults(scanId?: string, store: UseStore = pageStore()): Promise<ResultMeta[]> {
  const ks = await keysWithPrefix('result/', store);
  const values = await getMany(ks, store);
  return values
    .map((v, i) => checkRecord<ResultMeta>(v, 'result', ks[i]))
    .filter((m) => scanId === undefined || m.scanId === scanId)
    .sort((a, b) => a.createdAt - b.createdAt);
}

/** A stored result as an image (mu, 1/mm), with its undetermined mask when it keeps one (DBP results stored with it). */
export async function loadResultImage(id: string, store: UseStore = pageStore()): Promise<{ meta: ResultMeta; image: Image2D; undetermined?: Uint8Array }> {
  const [m, d] = await getMany([keys.result(id), keys.resultData(id)], store);
  const meta = checkRecord<ResultMeta>(m, 'result', keys.result(id));
  const data = checkRecord<ResultData>(d, 'result-data', keys.resultData(id));
  const image: Image2D = { grid: meta.grid, data: data.data, quantity: 'mu', muWater: meta.muWater, fovRadius: meta.fovRadius };
  if (data.undetermined === undefined) return { meta, image };
  checkMask(data.undetermined, meta.grid, `stored record ${keys.resultData(id)}: undetermined mask`, (msg) => new RecordError(msg));
  return { meta, image, undetermined: data.undetermined };
}

/** One result's description. */
export async function getResultMeta(id: string, store: UseStore = pageStore()): Promise<ResultMeta> {
  return checkRecord<ResultMeta>(await get(keys.result(id), store), 'result', keys.result(id));
}

/** Renames a result (read and write in one transaction). */
export async function renameResult(id: string, name: string, store: UseStore = pageStore()): Promise<ResultMeta> {
  const n = checkName(name);
  return transact(store, (tx) => patchRecord<ResultMeta>(tx, keys.result(id), 'result', (old) => ({ ...old, name: n })));
}

/** Deletes a result (and its volume's slabs), found and deleted in one transaction. */
export async function deleteResult(id: string, store: UseStore = pageStore()): Promise<void> {
  await transact(store, async (tx) => {
    for (const k of [keys.result(id), keys.resultData(id), ...(await tx.keys(slabPrefix('result', id)))]) tx.delete(k);
  });
}
