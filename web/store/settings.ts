// Page settings (one small record).
import { get, type UseStore } from 'idb-keyval';
import { pageStore, putAll } from './db';
import { checkRecord, keys, SCHEMA_VERSION, type Settings } from './records';

const DEFAULTS: Settings = { schema: SCHEMA_VERSION, kind: 'settings', demoCreated: false };

/** The stored settings, or the defaults on a first visit. */
export async function loadSettings(store: UseStore = pageStore()): Promise<Settings> {
  const v = await get(keys.settings, store);
  return v === undefined ? { ...DEFAULTS } : checkRecord<Settings>(v, 'settings', keys.settings);
}

/** Changes some settings. */
export async function saveSettings(change: Partial<Omit<Settings, 'schema' | 'kind'>>, store: UseStore = pageStore()): Promise<Settings> {
  const next = { ...(await loadSettings(store)), ...change };
  await putAll([[keys.settings, next]], store);
  return next;
}
