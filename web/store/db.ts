// The IndexedDB store (idb-keyval) and the one write primitive: several records in one
// transaction, all or nothing.
import { createStore, promisifyRequest, type UseStore } from 'idb-keyval';
import { toStorageError } from './quota';

export type { UseStore };

/** Database and object store names. */
export const DB_NAME = 'rimfill';
export const STORE_NAME = 'records';

let defaultStore: UseStore | undefined;

/** The page's store (opened on first use). Tests pass their own store to every call. */
export function pageStore(): UseStore {
  defaultStore ??= createStore(DB_NAME, STORE_NAME);
  return defaultStore;
}

/**
 * Writes every entry in one read-write transaction. If any write fails (a value that cannot be
 * stored, a full quota) the transaction is aborted and nothing is written.
 */
export async function putAll(entries: Array<[string, unknown]>, store: UseStore): Promise<void> {
  try {
    await store('readwrite', (s) => {
      try {
        for (const [k, v] of entries) s.put(v, k);
      } catch (err) {
        s.transaction.abort();
        throw err;
      }
      return promisifyRequest(s.transaction);
    });
  } catch (err) {
    throw await toStorageError(err, store);
  }
}

/** Deletes the keys in one transaction. */
export async function deleteAll(keys: string[], store: UseStore): Promise<void> {
  await store('readwrite', (s) => {
    for (const k of keys) s.delete(k);
    return promisifyRequest(s.transaction);
  });
}

/** All keys that start with `prefix`. */
export async function keysWithPrefix(prefix: string, store: UseStore): Promise<string[]> {
  const all = await store('readonly', (s) => promisifyRequest(s.getAllKeys(IDBKeyRange.bound(prefix, `${prefix}\uffff`))));
  return all.map(String);
}
