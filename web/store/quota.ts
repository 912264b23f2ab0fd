// Storage limits: a full quota is reported with what could be deleted; the page asks for
// persistent storage and shows use against the browser's estimate.
import { formatSize } from '../core/sizes';
import { getMany, type UseStore } from 'idb-keyval';
import type { ModelMeta, ResultMeta, ScanMeta } from './records';

/** The browser refused a write because the storage quota is used up. Nothing was written. */
export class StorageFullError extends Error {
  constructor(message: string, readonly largest: Array<{ kind: 'scan' | 'result' | 'model'; id: string; name: string; bytes: number }>) {
    super(message);
    this.name = 'StorageFullError';
  }
}

/** True for the DOMException browsers raise when the quota is exceeded. */
export function isQuotaError(err: unknown): boolean {
  return typeof err === 'object' && err !== null && (err as { name?: string }).name === 'QuotaExceededError';
}

/** Human-readable size: 1.5 MB, 320 kB (powers of 1000, as browsers report quota). */
export const formatBytes = formatSize;

/** Turns a quota error into a StorageFullError naming the largest stored items; other errors pass through. */
export async function toStorageError(err: unknown, store: UseStore): Promise<unknown> {
  if (!isQuotaError(err)) return err;
  let largest: StorageFullError['largest'] = [];
  try {
    const keys = (await store('readonly', (s) => new Promise<IDBValidKey[]>((res, rej) => {
      const r = s.getAllKeys();
      r.onsuccess = () => res(r.result);
      r.onerror = () => rej(r.error);
    }))).map(String).filter((k) => k.startsWith('scan/') || k.startsWith('result/') || k.startsWith('model/'));
    const metas = (await getMany<ScanMeta | ResultMeta | ModelMeta>(keys, store)).filter((m): m is ScanMeta | ResultMeta | ModelMeta => !!m);
    largest = metas
      .map((m) => ({ kind: m.kind, id: m.id, name: m.name, bytes: m.bytes }))
      .sort((a, b) => b.bytes - a.bytes)
      .slice(0, 5);
  } catch {
    // Listing failed as well: the message below still says the storage is full.
    largest = [];
  }
  const list = largest.map((l) => `${l.kind} "${l.name}" (${formatBytes(l.bytes)})`).join(', ');
  return new StorageFullError(
    'The browser\'s storage for this page is full, so nothing was saved. ' +
      (list ? `Delete scans, results or networks you no longer need; the largest are: ${list}.` : 'Delete scans, results or networks you no longer need.'),
    largest,
  );
}

export interface StorageUse {
  /** Bytes used by this page's origin, when the browser tells. */
  usage?: number;
  /** Bytes the browser allows, when it tells. */
  quota?: number;
  /** True when the browser promised not to evict the data. */
  persisted?: boolean;
}

/** What the browser reports about storage (StorageManager; absent fields where it is not available). */
export async function storageUse(): Promise<StorageUse> {
  const sm = typeof navigator !== 'undefined' ? navigator.storage : undefined;
  if (!sm?.estimate) return {};
  const est = await sm.estimate();
  const persisted = sm.persisted ? await sm.persisted() : undefined;
  return { usage: est.usage, quota: est.quota, persisted };
}

/** Asks the browser to keep this page's data under storage pressure; resolves to the answer. */
export async function requestPersistence(): Promise<boolean> {
  const sm = typeof navigator !== 'undefined' ? navigator.storage : undefined;
  if (!sm?.persist) return false;
  return sm.persist();
}
