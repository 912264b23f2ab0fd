// The page's reconstruction queue: one run at a time, in order, every job stored through the
// coordinator (the only writer of job records) so that a reload or a closed tab loses none.
import type { ReactiveController, ReactiveControllerHost } from 'lit';
import { CancelledError } from '../core/errors';
import { listJobs } from '../store/jobs';
import type { ResultMeta } from '../store/records';
import { newId } from '../store/scans';
import type { EngineClient } from '../worker/client';
import { queueFromRecords, type QueueJob } from './logic/queue-state';
import { remainingMs } from './logic/time-left';
import { liveSessions, startSession } from './page-session';

const message = (err: unknown) => (err instanceof Error ? err.message : String(err));

export interface QueueEvents {
  /** A job finished with a stored result. */
  done(result: ResultMeta): void;
  /** A run ended (done, failed or cancelled). */
  ended(): void;
  /** Something the queue could not store (the run itself goes on). */
  problem(text: string): void;
}

/** Keeps the queue's jobs for a lit host (which re-renders when they change). */
export class QueueKeeper implements ReactiveController {
  /** Jobs in order. */
  jobs: QueueJob[] = [];
  /** This page's session (its jobs are its own while it lives). */
  readonly session = startSession();
  private controllers = new Map<string, AbortController>();

  /** `budget`: the memory budget of each run in bytes, read when the run starts (undefined: the coordinator's default). */
  constructor(
    private readonly host: ReactiveControllerHost, private readonly client: () => EngineClient, private readonly on: QueueEvents,
    private readonly budget: () => number | undefined = () => undefined,
  ) {
    host.addController(this);
  }

  hostConnected(): void {}

  /** Reads the stored queue (after a reload: what was waiting or running shows as interrupted). */
  async load(): Promise<void> {
    const [records, live] = await Promise.all([listJobs(), liveSessions()]);
    const mine = new Set(this.jobs.map((j) => j.key));
    this.set([...queueFromRecords(records, this.session, live).filter((j) => !mine.has(j.key)), ...this.jobs]);
  }

  /** Unfinished jobs (waiting or running). */
  get pending(): number {
    return this.jobs.filter((j) => j.state === 'running' || j.state === 'waiting').length;
  }

  /** Queues a recipe on a scan: stored first, then run in turn. */
  async add(scan: { id: string; name: string }, recipe: Record<string, unknown>, name: string): Promise<void> {
    const job: QueueJob = { key: newId(), scanId: scan.id, scanName: scan.name, name, recipe, state: 'waiting', fraction: 0, stage: '' };
    this.set([...this.jobs, job]);
    await this.store(() => this.client().queueJob({ id: job.key, session: this.session, scanId: scan.id, scanName: scan.name, name, recipe }));
    this.pump();
  }

  /** An interrupted job back in line, as this page's. */
  async rerun(key: string): Promise<void> {
    const job = this.jobs.find((j) => j.key === key);
    if (job?.state !== 'interrupted') return;
    this.patch(key, { state: 'waiting', was: undefined, error: undefined, fraction: 0, stage: '' });
    await this.store(() => this.client().requeueJob(key, this.session));
    this.pump();
  }

  cancel(key: string): void {
    const job = this.jobs.find((j) => j.key === key);
    if (job?.state === 'waiting') {
      this.patch(key, { state: 'cancelled' });
      void this.store(() => this.client().settleJob(key, 'cancelled'));
    } else this.controllers.get(key)?.abort();
  }

  /** Forgets finished or interrupted jobs (their results stay). */
  forget(keys: string[]): void {
    const gone = new Set(keys.filter((k) => !['waiting', 'running'].includes(this.jobs.find((j) => j.key === k)?.state ?? '')));
    if (!gone.size) return;
    this.set(this.jobs.filter((j) => !gone.has(j.key)));
    void this.store(() => this.client().forgetJobs([...gone]));
  }

  private set(jobs: QueueJob[]) {
    this.jobs = jobs;
    this.host.requestUpdate();
  }

  private patch(key: string, change: Partial<QueueJob>) {
    this.set(this.jobs.map((j) => (j.key === key ? { ...j, ...change } : j)));
  }

  private async store(write: () => Promise<unknown>): Promise<void> {
    try {
      await write();
    } catch (err) {
      this.on.problem(`The queue could not be stored (it will not survive a reload): ${message(err)}`);
    }
  }

  private pump() {
    if (this.jobs.some((j) => j.state === 'running')) return;
    const next = this.jobs.find((j) => j.state === 'waiting');
    if (!next) return;
    const key = next.key;
    const controller = new AbortController();
    this.controllers.set(key, controller);
    this.patch(key, { state: 'running' });
    const budget = this.budget();
    this.client().run(next.scanId, next.recipe, {
      name: next.name, jobId: key, signal: controller.signal, ...(budget !== undefined ? { budget } : {}),
      onProgress: (p) => this.patch(key, { fraction: p.fraction, stage: p.stage, remainingMs: remainingMs(p.fraction, p.elapsedMs) }),
    }).then(
      (result) => {
        this.patch(key, { state: 'done', fraction: 1, seconds: result.seconds, resultId: result.id });
        this.on.done(result);
      },
      (err) => {
        const cancelled = err instanceof CancelledError;
        this.patch(key, cancelled ? { state: 'cancelled' } : { state: 'failed', error: message(err) });
        // The coordinator records this itself, unless it was stopped (a crash, or a cancel it did not answer in time).
        void this.store(() => this.client().settleJob(key, cancelled ? 'cancelled' : 'failed', cancelled ? undefined : message(err)));
      },
    ).finally(() => {
      this.controllers.delete(key);
      this.on.ended();
      this.pump();
    });
  }
}
