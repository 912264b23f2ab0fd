// The page's engine facade with stand-in workers: replies, progress, error classes, cancel, a
// crashed worker (the call fails and the next call gets a fresh engine), and a cancel the
// engine ignores (the engine is restarted, the call does not hang).
import { afterEach, describe, expect, it, vi } from 'vitest';
import { CancelledError, InputError } from '../../web/core/errors';
import { StorageFullError } from '../../web/store/quota';
import type { FromCoordinator } from '../../web/worker/app-protocol';
import { CANCEL_GRACE_MS, EngineClient, EngineStoppedError, type WorkerLike } from '../../web/worker/client';

/** A stand-in worker: records what it is sent; the test makes it answer or fail. */
class FakeWorker implements WorkerLike {
  sent: Array<Record<string, unknown>> = [];
  terminated = false;
  private handlers: Record<string, Array<(e: Event) => void>> = {};
  postMessage(msg: unknown): void {
    this.sent.push(msg as Record<string, unknown>);
  }
  addEventListener(type: string, h: (e: Event) => void): void {
    this.handlers[type] ??= [];
    this.handlers[type].push(h);
  }
  terminate(): void {
    this.terminated = true;
  }
  reply(msg: FromCoordinator): void {
    for (const h of this.handlers.message ?? []) h({ data: msg } as MessageEvent);
  }
  crash(message: string): void {
    for (const h of this.handlers.error ?? []) h({ message, preventDefault() {} } as unknown as Event);
  }
}

function setup() {
  const started: Array<{ coordinator: FakeWorker; kernel: FakeWorker }> = [];
  const client = new EngineClient(() => {
    const s = { coordinator: new FakeWorker(), kernel: new FakeWorker() };
    started.push(s);
    return { coordinator: s.coordinator, watched: [s.kernel] };
  });
  return { client, started };
}

const flush = () => new Promise((r) => setTimeout(r, 0));

afterEach(() => vi.useRealTimers());

describe('engine client', () => {
  it('every queue request goes out under its call id (a job id never takes its place) and gets its reply', async () => {
    const { client, started } = setup();
    const calls = [
      client.queueJob({ id: 'job-1', session: 's', scanId: 'scan', scanName: 'n', name: 'FBP, water cylinder', recipe: { method: 'fbp' } }),
      client.settleJob('job-1', 'cancelled'),
      client.requeueJob('job-1', 's'),
      client.forgetJobs(['job-1']),
    ];
    const c = started[0].coordinator;
    expect(c.sent.map((m) => typeof m.id)).toEqual(['number', 'number', 'number', 'number']);
    expect(new Set(c.sent.map((m) => m.id)).size).toBe(4);
    for (const m of c.sent) c.reply({ id: m.id as number, type: 'done', value: m.op });
    await expect(Promise.all(calls)).resolves.toEqual(['queue-add', 'queue-settle', 'queue-requeue', 'queue-forget']);
  });

  it('sends a request, reports progress and resolves with the reply', async () => {
    const { client, started } = setup();
    const progress: number[] = [];
    const p = client.run('scan-1', { method: 'fbp' }, { onProgress: (x) => progress.push(x.fraction) });
    const c = started[0].coordinator;
    expect(c.sent[0]).toMatchObject({ op: 'run', scanId: 'scan-1', recipe: { method: 'fbp' } });
    const id = c.sent[0].id as number;
    c.reply({ id, type: 'progress', fraction: 0.5, stage: 'filter' });
    c.reply({ id, type: 'done', value: { id: 'result-1' } });
    await expect(p).resolves.toEqual({ id: 'result-1' });
    expect(progress).toEqual([0.5]);
    expect(started).toHaveLength(1);
  });

  it('rebuilds the error classes the page tells apart', async () => {
    const { client, started } = setup();
    const c = () => started[0].coordinator;
    const a = client.importScan([]);
    c().reply({ id: c().sent[0].id as number, type: 'error', error: { name: 'InputError', message: 'scan: bad' } });
    await expect(a).rejects.toThrow(InputError);
    const b = client.importScan([]);
    c().reply({ id: c().sent[1].id as number, type: 'error', error: { name: 'StorageFullError', message: 'full', details: [{ kind: 'scan', id: 'x', name: 'x', bytes: 5 }] } });
    const err = await b.catch((e) => e);
    expect(err).toBeInstanceOf(StorageFullError);
    expect(err.largest[0].bytes).toBe(5);
  });

  it('a crashed worker fails the calls in flight and the next call starts a fresh engine', async () => {
    const { client, started } = setup();
    const p1 = client.run('s', {});
    const p2 = client.createDemo();
    started[0].kernel.crash('out of memory');
    await expect(p1).rejects.toThrow(EngineStoppedError);
    await expect(p2).rejects.toThrow(/stopped unexpectedly \(out of memory\).*nothing was stored/);
    expect(started[0].coordinator.terminated && started[0].kernel.terminated).toBe(true);
    const p3 = client.info();
    expect(started).toHaveLength(2);
    const c = started[1].coordinator;
    c.reply({ id: c.sent[0].id as number, type: 'done', value: { workers: 2, sharedMemory: false } });
    await expect(p3).resolves.toEqual({ workers: 2, sharedMemory: false });
  });

  it('cancel asks the engine to stop; the engine\'s CancelledError ends the call', async () => {
    const { client, started } = setup();
    const ctl = new AbortController();
    const p = client.run('s', {}, { signal: ctl.signal });
    ctl.abort();
    const c = started[0].coordinator;
    expect(c.sent[1]).toEqual({ op: 'cancel', id: c.sent[0].id });
    c.reply({ id: c.sent[0].id as number, type: 'error', error: { name: 'CancelledError', message: 'cancelled' } });
    await expect(p).rejects.toThrow(CancelledError);
    expect(c.terminated).toBe(false);
  });

  it('a cancel the engine ignores restarts the engine after the grace period', async () => {
    vi.useFakeTimers();
    const { client, started } = setup();
    const ctl = new AbortController();
    const p = client.run('s', {}, { signal: ctl.signal });
    const other = client.createDemo();
    ctl.abort();
    vi.advanceTimersByTime(CANCEL_GRACE_MS + 1);
    await expect(p).rejects.toThrow(CancelledError);
    await expect(other).rejects.toThrow(/restarted to stop a cancelled run/);
    expect(started[0].coordinator.terminated).toBe(true);
  });

  it('an already aborted signal sends nothing', async () => {
    const { client, started } = setup();
    const ctl = new AbortController();
    ctl.abort();
    await expect(client.run('s', {}, { signal: ctl.signal })).rejects.toThrow(CancelledError);
    await flush();
    expect(started).toHaveLength(0);
  });
});
