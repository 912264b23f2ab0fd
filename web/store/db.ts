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

/** Reads and writes inside a streamed transaction (streamTransaction). */
export interface StreamTx {
  put(key: string, value: unknown): Promise<void>;
  get(key: string): Promise<unknown>;
}

/** A key no record uses: the streamed transaction's keep-alive reads it. */
const KEEP_ALIVE_KEY = '\u0000keep-alive';

/**
 * Runs `body` inside ONE read-write transaction that stays open while `body` awaits other work
 * (reading a file, running the engine), so that a long import or a large result is stored all
 * or nothing: when `body` throws, or the page is closed or reloaded before it ends, nothing is
 * written. A transaction only accepts requests while one of its own requests completes, so
 * requests are queued and issued from a chain of cheap reads that also keeps the transaction
 * from committing early. Await each put before producing the next large value: the backend
 * then holds at most one in flight. The store is locked for other writers (and for readers of
 * the same store) until the transaction ends.
 */
export async function streamTransaction<T>(store: UseStore, body: (tx: StreamTx) => Promise<T>): Promise<T> {
  let result: T;
  try {
    await store('readwrite', (s) => new Promise<void>((resolve, reject) => {
      const tx = s.transaction;
      const queue: Array<() => void> = [];
      let done = false, failure: unknown;
      const pump = () => {
        while (queue.length) queue.shift()!();
        if (done) return; // no more requests: the transaction commits
        s.get(KEEP_ALIVE_KEY).onsuccess = pump;
      };
      const request = <R>(make: () => IDBRequest<R>) => new Promise<R>((ok, fail) => {
        if (done) throw new Error('streamed transaction: a request after the body finished');
        queue.push(() => {
          try {
            const r = make();
            r.onsuccess = () => ok(r.result);
            r.onerror = () => fail(r.error);
          } catch (err) {
            fail(err); // e.g. a value that cannot be stored: the body fails, the transaction aborts
          }
        });
      });
      tx.oncomplete = () => resolve();
      tx.onabort = () => reject(failure ?? tx.error ?? new Error('the storage transaction was aborted'));
      pump();
      body({
        put: (key, value) => request(() => s.put(value, key)).then(() => undefined),
        get: (key) => request(() => s.get(key)),
      }).then((r) => {
        result = r;
        done = true;
      }, (err) => {
        failure = err;
        done = true;
        try {
          tx.abort();
        } catch {
          // already finished: onabort or oncomplete has settled the promise
        }
      });
    }));
  } catch (err) {
    throw await toStorageError(err, store);
  }
  return result!;
}

/** A streamed transaction opened by its first write (deferredTransaction). */
export interface DeferredTx {
  /** Writes in the transaction (opened by the first call). */
  put(key: string, value: unknown): Promise<void>;
  /** Reads in the transaction (opened by the first call). */
  get(key: string): Promise<unknown>;
  /** Commits what was written (opens the transaction first when nothing was). */
  commit(): Promise<void>;
  /** Drops everything written; the transaction's own failure, when it had one, wins. */
  abort(reason: unknown): Promise<void>;
}

/**
 * A streamTransaction that opens on the first put, for writers that must first finish reading
 * the same store (a reconstruction reads the scan, then writes its volume): the store stays free
 * for readers until then.
 */
export function deferredTransaction(store: UseStore): DeferredTx {
  let started: Promise<void> | undefined;
  let tx!: (t: StreamTx) => void;
  const ready = new Promise<StreamTx>((r) => (tx = r));
  let finish!: () => void, fail!: (err: unknown) => void;
  const end = new Promise<void>((res, rej) => {
    finish = res;
    fail = rej;
  });
  end.catch(() => undefined);
  const start = () => (started ??= streamTransaction(store, async (t) => {
    tx(t);
    await end;
  }));
  /** The transaction, once open (a failure to open rejects). */
  const opened = () => Promise.race([ready, start().then(() => ready)]);
  return {
    async put(key, value) {
      await (await opened()).put(key, value);
    },
    async get(key) {
      return (await opened()).get(key);
    },
    async commit() {
      const done = start();
      finish();
      await done;
    },
    async abort(reason) {
      if (!started) return;
      fail(reason);
      await started.catch(() => undefined);
    },
  };
}
