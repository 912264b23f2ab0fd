// The page's queue as the Reconstruct tab shows it, from the stored jobs (store/jobs.ts): a job
// still waiting or running whose page is gone (reloaded, tab closed) was interrupted; it is shown
// as such with its recipe, never dropped. Unfinished jobs of another open tab are that tab's.
import type { JobRecord, JobState } from '../../store/records';

export type QueueState = JobState | 'interrupted';

/** One queued reconstruction as the queue shows it. */
export interface QueueJob {
  /** The stored job's id. */
  key: string;
  scanId: string;
  scanName: string;
  name: string;
  recipe: Record<string, unknown>;
  state: QueueState;
  /** 0..1 while running. */
  fraction: number;
  stage: string;
  /** Estimated milliseconds left (undefined until known). */
  remainingMs?: number;
  /** Seconds the run took (done). */
  seconds?: number;
  error?: string;
  resultId?: string;
  /** Interrupted: whether it was running or still waiting when its page went away. */
  was?: 'waiting' | 'running';
}

/** The queue after a (re)load: this page's and finished jobs as stored, unfinished ones of a page that is gone as interrupted. */
export function queueFromRecords(records: readonly JobRecord[], session: string, liveSessions: ReadonlySet<string>): QueueJob[] {
  const out: QueueJob[] = [];
  for (const r of [...records].sort((a, b) => a.createdAt - b.createdAt)) {
    const unfinished = r.state === 'waiting' || r.state === 'running';
    if (unfinished && r.session !== session && liveSessions.has(r.session)) continue;
    const job: QueueJob = { key: r.id, scanId: r.scanId, scanName: r.scanName, name: r.name, recipe: r.recipe, state: r.state, fraction: r.state === 'done' ? 1 : 0, stage: '' };
    if (r.seconds !== undefined) job.seconds = r.seconds;
    if (r.error !== undefined) job.error = r.error;
    if (r.resultId !== undefined) job.resultId = r.resultId;
    if (unfinished && r.session !== session) {
      job.state = 'interrupted';
      job.was = r.state as 'waiting' | 'running';
    }
    out.push(job);
  }
  return out;
}
