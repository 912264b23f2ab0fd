// Page settings (one small record).
import { get, type UseStore } from 'idb-keyval';
import { pageStore } from './db';
import { checkRecord, keys, SCHEMA_VERSION, type Settings } from './records';
import { transact } from './transact';

const DEFAULTS: Settings = { schema: SCHEMA_VERSION, kind: 'settings', demoCreated: false };

/** The stored settings, or the defaults on a first visit. */
export async function loadSettings(store: UseStore = pageStore()): Promise<Settings> {
  const v = await get(keys.settings, store);
  return v === undefined ? { ...DEFAULTS } : checkRecord<Settings>(v, 'settings', keys.settings);
}

/** Changes some settings (read and write in one transaction). */
export async function saveSettings(change: Partial<Omit<Settings, 'schema' | 'kind'>>, store: UseStore = pageStore()): Promise<Settings> {
  return transact(store, async (tx) => {
    const v = await tx.get(keys.settings);
    const next: Settings = { ...(v === undefined ? DEFAULTS : checkRecord<Settings>(v, 'settings', keys.settings)), ...change };
    tx.put(keys.settings, next);
    return next;
  });
}
