// The page's queue in storage: one record per queued reconstruction, written by the coordinator
// only, each change a read-modify-write in one transaction (store/transact.ts).
import { getMany, type UseStore } from 'idb-keyval';
import { InputError } from '../core/errors';
import { deleteAll, keysWithPrefix, pageStore, putAll } from './db';
import { transact, type Tx } from './transact';
import { checkRecord, keys, SCHEMA_VERSION, type JobRecord, type JobState } from './records';

/** What the page gives to queue a job. */
export type NewJob = Pick<JobRecord, 'id' | 'session' | 'scanId' | 'scanName' | 'name' | 'recipe'>;

const FINISHED: readonly JobState[] = ['done', 'failed', 'cancelled'];

/** Stores a new waiting job. */
export async function addJob(job: NewJob, store: UseStore = pageStore()): Promise<JobRecord> {
  if (typeof job.id !== 'string' || !job.id || typeof job.session !== 'string' || !job.session) throw new InputError('queue: a job needs an id and the page it belongs to');
  const now = Date.now();
  const record: JobRecord = {
    schema: SCHEMA_VERSION, kind: 'job', id: job.id, session: job.session, scanId: job.scanId, scanName: job.scanName,
    name: job.name, recipe: job.recipe, state: 'waiting', createdAt: now, updatedAt: now,
  };
  await putAll([[keys.job(job.id), record]], store);
  return record;
}

/** What a change may set on a stored job. */
export type JobChange = Partial<Pick<JobRecord, 'state' | 'session' | 'resultId' | 'seconds' | 'error'>>;

/**
 * Moves a stored job on, in the caller's transaction: `change` applies to an unfinished job (a
 * finished one stays as it is, so a late cancel never undoes "done"); `reopen` also applies to a
 * finished one. A job no longer stored (forgotten from another tab) stays forgotten.
 */
export async function changeJob(tx: Pick<Tx, 'get' | 'put'>, id: string, change: JobChange, reopen = false): Promise<void> {
  const key = keys.job(id);
  const old = await tx.get(key);
  if (old === undefined) return;
  const job = checkRecord<JobRecord>(old, 'job', key);
  if (FINISHED.includes(job.state) && !reopen) return;
  const next: JobRecord = { ...job, ...change, updatedAt: Date.now() };
  if (change.state === 'waiting' || change.state === 'running') delete next.error;
  tx.put(key, next);
}

/** Changes a stored job in its own transaction (changeJob). */
export async function updateJob(id: string, change: JobChange, store: UseStore = pageStore(), reopen = false): Promise<void> {
  await transact(store, (tx) => changeJob(tx, id, change, reopen));
}

/** Stored jobs, oldest first. */
export async function listJobs(store: UseStore = pageStore()): Promise<JobRecord[]> {
  const ks = await keysWithPrefix('job/', store);
  const values = await getMany(ks, store);
  return values.map((v, i) => checkRecord<JobRecord>(v, 'job', ks[i])).sort((a, b) => a.createdAt - b.createdAt);
}

/** Forgets jobs (their results stay). */
export async function deleteJobs(ids: string[], store: UseStore = pageStore()): Promise<void> {
  await deleteAll(ids.map(keys.job), store);
}
