// Scans in storage: saved with their projections in one transaction, listed from their small
// descriptions, renamed, re-described (geometry) and deleted together with their results.
import { get, getMany, type UseStore } from 'idb-keyval';
import { InputError } from '../core/errors';
import { viewCount, type Geometry } from '../core/geometry/types';
import { checkGeometryMatchesData, validateGeometry } from '../core/geometry/validate';
import type { Image2D } from '../core/image';
import type { Scan } from '../core/scan';
import type { Volume } from '../core/volume';
import { keysWithPrefix, pageStore, putAll } from './db';
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
  scan: Scan;
  source: ScanSource;
  reference?: StoredImage;
  /** Cone-beam scans: the whole reference volume (`reference` then holds its central slice). */
  referenceVolume?: Volume;
  warnings?: string[];
}

/** Stores a scan (and its reference image) in one transaction; returns its description. */
export async function saveScan(input: NewScan, store: UseStore = pageStore()): Promise<ScanMeta> {
  const id = newId();
  const { scan } = input;
  const refBytes = (input.reference ? input.reference.data.byteLength : 0) + (input.referenceVolume ? input.referenceVolume.data.byteLength : 0);
  const slabs = input.referenceVolume ? volumeEntries('scan', id, input.referenceVolume) : undefined;
  const meta: ScanMeta = {
    schema: SCHEMA_VERSION,
    kind: 'scan',
    id,
    name: checkName(input.name),
    createdAt: Date.now(),
    geometry: scan.geometry,
    muWater: scan.muWater,
    notes: scan.notes,
    source: input.source,
    bytes: scan.data.byteLength + refBytes,
    hasReference: !!input.reference,
    ...(slabs ? { referenceVolume: slabs.info } : {}),
    warnings: input.warnings ?? [],
  };
  const data: ScanData = { schema: SCHEMA_VERSION, kind: 'scan-data', id, projections: scan.data, reference: input.reference };
  await putAll([[keys.scan(id), meta], [keys.scanData(id), data], ...(slabs?.entries ?? [])], store);
  return meta;
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

/** A stored scan ready to reconstruct, and its reference image when it has one. */
export async function loadScan(id: string, store: UseStore = pageStore()): Promise<{ meta: ScanMeta; scan: Scan; reference?: Image2D }> {
  const [m, d] = await getMany([keys.scan(id), keys.scanData(id)], store);
  const meta = checkRecord<ScanMeta>(m, 'scan', keys.scan(id));
  const data = checkRecord<ScanData>(d, 'scan-data', keys.scanData(id));
  const scan: Scan = { geometry: meta.geometry, data: data.projections, muWater: meta.muWater, notes: meta.notes };
  const r = data.reference;
  const reference: Image2D | undefined = r ? { grid: r.grid, data: r.data, quantity: 'mu', muWater: r.muWater ?? meta.muWater, fovRadius: r.fovRadius } : undefined;
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
    const doomed: string[] = [keys.scan(id), keys.scanData(id), ...(await tx.keys(slabPrefix('scan', id))), ...(await tx.keys(keys.maskData(id, '')))];
    for (let i = 0; i < metas.length; i++) {
      if ((metas[i] as { scanId?: string } | undefined)?.scanId !== id) continue;
      const rid = resultKeys[i].slice('result/'.length);
      doomed.push(keys.result(rid), keys.resultData(rid), ...(await tx.keys(slabPrefix('result', rid))));
    }
    for (const k of doomed) tx.delete(k);
  });
}
