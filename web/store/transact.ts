// Read-modify-write in ONE IndexedDB transaction. Everything a change reads and writes goes
// through the Tx handed to `work`, so no other writer can slip in between the read and the
// write (a rename during a long calibration survives it; a deleted record is not written back).
// `work` may await only the Tx's own calls: awaiting anything else lets the transaction commit
// early, and its next call then fails (a programming error, never a silent lost update).
import { promisifyRequest, type UseStore } from 'idb-keyval';
import { toStorageError } from './quota';
import { checkRecord, RecordError, type StoredRecord } from './records';

/** The reads and writes of one transaction. */
export interface Tx {
  get(key: string): Promise<unknown>;
  getMany(keys: string[]): Promise<unknown[]>;
  /** Keys starting with `prefix`, in key order. */
  keys(prefix: string): Promise<string[]>;
  put(key: string, value: unknown): void;
  delete(key: string): void;
}

/** Runs `work` in one read-write transaction; a throw aborts it and nothing is written. */
export async function transact<T>(store: UseStore, work: (tx: Tx) => Promise<T>): Promise<T> {
  try {
    return await store('readwrite', async (s) => {
      const tx: Tx = {
        get: (key) => promisifyRequest(s.get(key)),
        getMany: (keys) => Promise.all(keys.map((k) => promisifyRequest(s.get(k)))),
        keys: async (prefix) => (await promisifyRequest(s.getAllKeys(IDBKeyRange.bound(prefix, `${prefix}\uffff`)))).map(String),
        put: (key, value) => void s.put(value, key),
        delete: (key) => void s.delete(key),
      };
      let result: T;
      try {
        result = await work(tx);
      } catch (err) {
        s.transaction.abort();
        throw err;
      }
      await promisifyRequest(s.transaction);
      return result;
    });
  } catch (err) {
    throw await toStorageError(err, store);
  }
}

/**
 * Reads the record at `key` (checked as `kind`), lets `change` make the next version and writes
 * it back, in the caller's transaction. A record that is gone throws RecordError: a change to a
 * deleted scan or result never brings it back.
 */
export async function patchRecord<R extends StoredRecord>(tx: Tx, key: string, kind: R['kind'], change: (old: R) => R): Promise<R> {
  const old = await tx.get(key);
  if (old === undefined) throw new RecordError(`stored record ${key} no longer exists (deleted meanwhile?)`);
  const next = change(checkRecord<R>(old, kind, key));
  tx.put(key, next);
  return next;
}

/**
 * Writes a new result's records (resultRecords) in one transaction with a check that its scan is
 * still stored: a run that ends after its scan was deleted stores nothing. `along` writes what
 * belongs with the result in the same transaction (its queue job marked done).
 */
export async function putResultEntries(scanId: string, entries: Array<[string, unknown]>, store: UseStore, along?: (tx: Tx) => Promise<void>): Promise<void> {
  await transact(store, async (tx) => {
    if ((await tx.get(`scan/${scanId}`)) === undefined) throw new RecordError(`the scan was deleted while its result was being made; nothing was stored`);
    for (const [k, v] of entries) tx.put(k, v);
    await along?.(tx);
  });
}
