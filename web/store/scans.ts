// Scans in storage: saved with their projections in one transaction, listed from their small
// descriptions, renamed, re-described (geometry) and deleted together with their results.
import { get, getMany, type UseStore } from 'idb-keyval';
import { InputError } from '../core/errors';
import { viewCount, type Geometry } from '../core/geometry/types';
import { checkGeometryMatchesData, validateGeometry } from '../core/geometry/validate';
import type { Image2D } from '../core/image';
import type { Scan } from '../core/scan';
import { asSource, readWholeScan, viewSize, type ProjectionSource } from '../core/projection-source';
import type { RunHooks } from '../core/run-hooks';
import { throwIfCancelled } from '../core/errors';
import type { Volume } from '../core/volume';
import { keysWithPrefix, pageStore, streamTransaction } from './db';
import { chunkKey, chunkRecord, PreviewRow, projectionLayout, storedProjections } from './projections';
import { checkRecord, keys, RecordError, SCHEMA_VERSION, type ScanData, type ScanMeta, type ScanSource, type StoredImage } from './records';
import { patchRecord, transact } from './transact';
import { loadVolume, slabPrefix, volumeEntries } from './volumes';

/** A new record id (random, sortable enough for display). */
export function newId(): string {
  const c = globalThis.crypto;
  if (c?.randomUUID) return c.randomUUID();
  return `${Date.now().toString(36)}-${Math.random().toString(36).slice(2, 10)}`;
}

/** Checks a display name: 1 to 200 characters after trimming. */
export function checkName(name: unknown): string {
  const n = typeof name === 'string' ? name.trim() : '';
  if (n.length < 1 || n.length > 200) throw new InputError(`name: got ${JSON.stringify(name)}, expected 1 to 200 characters`);
  return n;
}

export interface NewScan {
  name: string;
  /** The projections: a scan in memory, or a source read a chunk of views at a time. */
  scan: Scan | ProjectionSource;
  source: ScanSource;
  reference?: StoredImage;
  /** Cone-beam scans: the whole reference volume (`reference` then holds its central slice). */
  referenceVolume?: Volume;
  warnings?: string[];
  /** Binning or cropping applied on import. */
  reduction?: ScanMeta['reduction'];
}

export interface SaveHooks extends RunHooks {
  /** Sees each chunk of views before it is stored (may throw to refuse the scan). */
  inspect?: (data: Float32Array, v0: number) => void;
  /** Warnings known only once every view was read (a streamed import's conversion counts). */
  lateWarnings?: () => string[];
}

/**
 * Stores a scan in ONE transaction: its projections in chunks of views (read from the source
 * one chunk at a time), a preview row, its description and any reference. Nothing is stored
 * when reading, a check, the quota or a cancel stops it, or when the page goes away meanwhile.
 */
export async function saveScan(input: NewScan, store: UseStore = pageStore(), hooks: SaveHooks = {}): Promise<ScanMeta> {
  const id = newId();
  const source = asSource(input.scan);
  const g = source.geometry;
  const views = viewCount(g), frame = viewSize(g);
  const layout = projectionLayout(g);
  const name = checkName(input.name);
  const refBytes = (input.reference ? input.reference.data.byteLength : 0) + (input.referenceVolume ? input.referenceVolume.data.byteLength : 0);
  const slabs = input.referenceVolume ? volumeEntries('scan', id, input.referenceVolume) : undefined;
  return streamTransaction(store, async (tx) => {
    const preview = new PreviewRow(g);
    for (let c = 0; c < layout.chunks; c++) {
      throwIfCancelled(hooks.signal);
      const v0 = c * layout.viewsPerChunk, v1 = Math.min(views, v0 + layout.viewsPerChunk);
      const data = await source.read(v0, v1);
      hooks.inspect?.(data, v0);
      preview.add(v0, data);
      await tx.put(chunkKey(id, c), chunkRecord(id, c, v0, v1 - v0, data.length === (v1 - v0) * frame ? data : data.slice(0, (v1 - v0) * frame)));
      hooks.onProgress?.(v1 / views, 'storing views');
    }
    throwIfCancelled(hooks.signal);
    const meta: ScanMeta = {
      schema: SCHEMA_VERSION,
      kind: 'scan',
      id,
      name,
      createdAt: Date.now(),
      geometry: g,
      muWater: source.muWater,
      notes: source.notes,
      source: input.source,
      bytes: views * frame * 4 + refBytes,
      hasReference: !!input.reference,
      ...(slabs ? { referenceVolume: slabs.info } : {}),
      warnings: [...(input.warnings ?? []), ...(hooks.lateWarnings?.() ?? [])],
      projections: layout,
      ...(input.reduction ? { reduction: input.reduction } : {}),
    };
    const data: ScanData = { schema: SCHEMA_VERSION, kind: 'scan-data', id, reference: input.reference };
    for (const [k, v] of [[keys.scan(id), meta], [keys.scanData(id), data], [keys.scanPreview(id), preview.record(id)], ...(slabs?.entries ?? [])] as Array<[string, unknown]>) {
      await tx.put(k, v);
    }
    return meta;
  });
}

/** A cone-beam scan's reference volume; throws RecordError when it has none or a slab is damaged. */
export async function loadReferenceVolume(id: string, store: UseStore = pageStore()): Promise<Volume> {
  const meta = await getScanMeta(id, store);
  if (!meta.referenceVolume) throw new RecordError(`scan "${meta.name}" has no reference volume`);
  return loadVolume('scan', id, meta.referenceVolume, store);
}

/** Every stored scan's description, oldest first. */
export async function listScans(store: UseStore = pageStore()): Promise<ScanMeta[]> {
  const ks = await keysWithPrefix('scan/', store);
  const values = await getMany(ks, store);
  return values.map((v, i) => checkRecord<ScanMeta>(v, 'scan', ks[i])).sort((a, b) => a.createdAt - b.createdAt);
}

/** One scan's description. */
export async function getScanMeta(id: string, store: UseStore = pageStore()): Promise<ScanMeta> {
  return checkRecord<ScanMeta>(await get(keys.scan(id), store), 'scan', keys.scan(id));
}

/** A stored scan's description and its reference image, when it has one (projections not read). */
export async function loadScanReference(id: string, store: UseStore = pageStore()): Promise<{ meta: ScanMeta; reference?: Image2D }> {
  const [m, d] = await getMany([keys.scan(id), keys.scanData(id)], store);
  const meta = checkRecord<ScanMeta>(m, 'scan', keys.scan(id));
  const r = checkRecord<ScanData>(d, 'scan-data', keys.scanData(id)).reference;
  const reference: Image2D | undefined = r ? { grid: r.grid, data: r.data, quantity: 'mu', muWater: r.muWater ?? meta.muWater, fovRadius: r.fovRadius } : undefined;
  return { meta, reference };
}

/** A stored scan with all its projections in memory (for methods that need them whole), and its reference image. */
export async function loadScan(id: string, store: UseStore = pageStore(), signal?: AbortSignal): Promise<{ meta: ScanMeta; scan: Scan; reference?: Image2D }> {
  const { meta, reference } = await loadScanReference(id, store);
  const scan = await readWholeScan(storedProjections(meta, store), signal);
  return { meta, scan, reference };
}

/** Renames a scan (read and write in one transaction). */
export async function renameScan(id: string, name: string, store: UseStore = pageStore()): Promise<ScanMeta> {
  const n = checkName(name);
  return transact(store, (tx) => patchRecord<ScanMeta>(tx, keys.scan(id), 'scan', (old) => ({ ...old, name: n })));
}

/**
 * Replaces a scan's geometry after validating it against the stored data: a wrong value throws
 * InputError naming the field, and nothing changes. Read and write in one transaction.
 */
export async function setScanGeometry(id: string, geometry: unknown, store: UseStore = pageStore()): Promise<ScanMeta> {
  const g: Geometry = validateGeometry(geometry);
  return transact(store, (tx) => patchRecord<ScanMeta>(tx, keys.scan(id), 'scan', (old) => {
    const d = old.geometry.detector;
    checkGeometryMatchesData(g, d.channels, d.rows, viewCount(old.geometry));
    return { ...old, geometry: g };
  }));
}

/**
 * Deletes a scan, its projections, reference volume, the masks kept with it and every result
 * made from it (with their volumes), finding them and deleting them in one transaction.
 */
export async function deleteScan(id: string, store: UseStore = pageStore()): Promise<void> {
  await transact(store, async (tx) => {
    const resultKeys = await tx.keys('result/');
    const metas = await tx.getMany(resultKeys);
    const doomed: string[] = [keys.scan(id), keys.scanData(id), keys.scanPreview(id), ...(await tx.keys(keys.scanChunks(id))), ...(await tx.keys(slabPrefix('scan', id))), ...(await tx.keys(keys.maskData(id, '')))];
    for (let i = 0; i < metas.length; i++) {
      if ((metas[i] as { scanId?: string } | undefined)?.scanId !== id) continue;
      const rid = resultKeys[i].slice('result/'.length);
      doomed.push(keys.result(rid), keys.resultData(rid), ...(await tx.keys(slabPrefix('result', rid))));
    }
    for (const k of doomed) tx.delete(k);
  });
}
