// The queue survives a reload: every queued run is a stored job record, written by the
// coordinator only (each change a read-modify-write in one transaction); a finished run marks
// its job done in the same transaction as its result; after a reload, what was waiting or
// running in a page that is gone shows as interrupted, with its recipe, ready to run again.
import 'fake-indexeddb/auto';
import { createStore, get } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import { CancelledError } from '../../web/core/errors';
import type { Geometry } from '../../web/core/geometry/types';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { putAll } from '../../web/store/db';
import { changeJob, listJobs } from '../../web/store/jobs';
import { transact } from '../../web/store/transact';
import { keys, RecordError } from '../../web/store/records';
import { listResults } from '../../web/store/results';
import { saveScan } from '../../web/store/scans';
import { queueFromRecords } from '../../web/ui/logic/queue-state';
import { Coordinator } from '../../web/worker/coordinator';
import { localWorkspace } from '../helpers/engine';

let n = 0;
const coordinator = () => {
  const store = createStore(`queue-${n++}`, 'records');
  return { store, c: new Coordinator({ openWorkspace: () => localWorkspace(1), sharedMemory: false, store }) };
};

const geometry: Geometry = { kind: 'parallel', detector: { shape: 'flat', channels: 64, rows: 1, pitch: [1, 1], offset: [0, 0] }, anglesDeg: { start: 0, step: 3, count: 60 } };
const phantom = { ...sheppLogan('modified', 28, 0.02), muWater: 0.02 };
const recipe = { method: 'fbp', extend: 'water', grid: { size: 32, pixel: 2 } };

async function scanIn(store: ReturnType<typeof createStore>) {
  return saveScan({ name: 'phantom', scan: { geometry, data: analyticSinogram(phantom, geometry), muWater: 0.02 }, source: { type: 'file', fileNames: [] } }, store);
}

const job = (id: string, session: string, scanId: string) => ({ id, session, scanId, scanName: 'phantom', name: 'FBP, water cylinder', recipe });

describe('the stored queue', () => {
  it('a run marks its job running, then done with the result in the same write', async () => {
    const { c, store } = coordinator();
    const s = await scanIn(store);
    await c.handle({ op: 'queue-add', job: job('j1', 'page-a', s.id) });
    expect((await listJobs(store))[0]).toMatchObject({ id: 'j1', state: 'waiting', session: 'page-a', recipe });
    // What the record says while the run reports progress (each read is queued before the final write).
    const during: Array<Promise<unknown>> = [];
    const result = await c.handle({ op: 'run', scanId: s.id, recipe, name: 'FBP, water cylinder', jobId: 'j1' }, {
      onProgress: () => void during.push(get(keys.job('j1'), store)),
    });
    const [stored] = await listJobs(store);
    expect(stored).toMatchObject({ state: 'done', resultId: result.id });
    expect(stored.seconds).toBeCloseTo(result.seconds, 6);
    expect(during.length).toBeGreaterThan(0);
    expect(((await during[0]) as { state: string }).state).toBe('running');
  });

  it('a failed run and a cancelled run are recorded as such; a late cancel does not undo "done"', async () => {
    const { c, store } = coordinator();
    const s = await scanIn(store);
    await c.handle({ op: 'queue-add', job: job('bad', 'p', s.id) });
    await expect(c.handle({ op: 'run', scanId: s.id, recipe: { method: 'magic' }, jobId: 'bad' })).rejects.toThrow(/recipe method/);
    await c.handle({ op: 'queue-add', job: job('stop', 'p', s.id) });
    const ctl = new AbortController();
    ctl.abort();
    await expect(c.handle({ op: 'run', scanId: s.id, recipe, jobId: 'stop' }, { signal: ctl.signal })).rejects.toThrow(CancelledError);
    const byId = Object.fromEntries((await listJobs(store)).map((j) => [j.id, j]));
    expect(byId.bad).toMatchObject({ state: 'failed' });
    expect(byId.bad.error).toMatch(/recipe method: got "magic"/);
    expect(byId.stop.state).toBe('cancelled');
    expect(await listResults(undefined, store)).toEqual([]);
    await c.handle({ op: 'queue-add', job: job('fine', 'p', s.id) });
    await c.handle({ op: 'run', scanId: s.id, recipe, jobId: 'fine' });
    await c.handle({ op: 'queue-settle', jobId: 'fine', state: 'cancelled' });
    expect((await listJobs(store)).find((j) => j.id === 'fine')!.state).toBe('done');
  });

  it('after a reload, what a closed page left waiting or running is interrupted; run again, it is this page\'s', async () => {
    const { c, store } = coordinator();
    const s = await scanIn(store);
    for (const id of ['w', 'r', 'd']) {
      await c.handle({ op: 'queue-add', job: job(id, 'closed-page', s.id) });
      await new Promise((r) => setTimeout(r, 3)); // queued one after another (the queue is in order of queueing)
    }
    await transact(store, async (tx) => {
      await changeJob(tx, 'r', { state: 'running' });
      await changeJob(tx, 'd', { state: 'done', resultId: 'x', seconds: 2 });
    });
    await c.handle({ op: 'queue-add', job: job('other', 'open-tab', s.id) });
    const shown = queueFromRecords(await listJobs(store), 'reloaded-page', new Set(['open-tab', 'reloaded-page']));
    expect(shown.map((j) => [j.key, j.state, j.was])).toEqual([['w', 'interrupted', 'waiting'], ['r', 'interrupted', 'running'], ['d', 'done', undefined]]);
    // With its recipe and name, for one click to run again.
    expect(shown[1]).toMatchObject({ recipe, name: 'FBP, water cylinder', scanId: s.id });
    await c.handle({ op: 'queue-requeue', jobId: 'r', session: 'reloaded-page' });
    const again = queueFromRecords(await listJobs(store), 'reloaded-page', new Set(['open-tab', 'reloaded-page']));
    expect(again.find((j) => j.key === 'r')!.state).toBe('waiting');
    await c.handle({ op: 'queue-forget', ids: ['w', 'd'] });
    expect((await listJobs(store)).map((j) => j.id).sort()).toEqual(['other', 'r']);
  });

  it('a change the record refuses writes nothing at all (one transaction)', async () => {
    const { store } = coordinator();
    await putAll([[keys.job('broken'), { kind: 'scan' }]], store);
    await expect(transact(store, async (tx) => {
      tx.put('unrelated', 1);
      await changeJob(tx, 'broken', { state: 'failed' });
    })).rejects.toThrow(RecordError);
    expect(await listResults(undefined, store)).toEqual([]);
    expect(await get('unrelated', store)).toBeUndefined();
  });
});
