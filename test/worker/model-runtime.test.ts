// The coordinator's model runtime (model-runtime.ts) with model workers stood in by Node
// MessageChannels served by the Node runtime: a cancelled run stops its worker at once and the
// next model starts a fresh one; a worker that dies fails the call in flight (no hang).
import { MessageChannel } from 'node:worker_threads';
import { afterEach, describe, expect, it } from 'vitest';
import { CancelledError } from '../../web/core/errors';
import type { NetworkOpener } from '../../web/core/model/runner';
import { serveModels } from '../../web/worker/model-host';
import type { ModelPort } from '../../web/worker/model-protocol';
import { ModelRuntime, type ModelWorkerStarter } from '../../web/worker/model-runtime';
import { identityModel, openNetworkNode } from '../helpers/networks';

interface FakeWorker {
  terminated: boolean;
  die: (reason: string) => void;
}

const channels: MessageChannel[] = [];
afterEach(() => {
  for (const ch of channels.splice(0)) {
    ch.port1.close();
    ch.port2.close();
  }
});

/** Starts "workers" whose runs wait until `gate` is opened (a long inference). */
function fakeWorkers(gate?: Promise<void>) {
  const workers: FakeWorker[] = [];
  const slowOpen: NetworkOpener = async (bytes) => {
    const inner = await openNetworkNode(bytes);
    return { signature: inner.signature, dispose: () => inner.dispose(), run: async (...a) => {
      await gate;
      return inner.run(...a);
    } };
  };
  const starter: ModelWorkerStarter = () => {
    const ch = new MessageChannel();
    channels.push(ch);
    serveModels(ch.port1 as unknown as ModelPort, slowOpen);
    const w: FakeWorker = { terminated: false, die: () => undefined };
    workers.push(w);
    return {
      port: ch.port2 as unknown as ModelPort,
      onFailure: (h) => (w.die = h),
      terminate: () => {
        w.terminated = true;
        ch.port1.close();
      },
    };
  };
  return { workers, starter };
}

const tensor = () => ({ data: Float32Array.from([1, 2, 3, 4]), dims: [1, 1, 2, 2] });

describe('model runtime in the coordinator', () => {
  it('keeps one worker for successive models', async () => {
    const { workers, starter } = fakeWorkers();
    const rt = new ModelRuntime(starter);
    for (let i = 0; i < 2; i++) {
      const net = await rt.open(identityModel());
      expect(Array.from((await net.run('image', 'prior', tensor())).data)).toEqual([1, 2, 3, 4]);
      await net.dispose();
    }
    expect(workers.length).toBe(1);
    expect(rt.workersStarted).toBe(1);
  });

  it('a cancelled run rejects at once, stops its worker, and the next model gets a new one', async () => {
    const { workers, starter } = fakeWorkers(new Promise(() => undefined));
    const rt = new ModelRuntime(starter);
    const net = await rt.open(identityModel());
    const ctl = new AbortController();
    const pending = net.run('image', 'prior', tensor(), ctl.signal);
    ctl.abort();
    await expect(pending).rejects.toBeInstanceOf(CancelledError);
    expect(workers[0].terminated).toBe(true);
    await net.dispose(); // a stopped worker's model needs no closing
    await rt.open(identityModel());
    expect(workers.length).toBe(2);
    expect(workers[1].terminated).toBe(false);
  });

  it('a cancel while the model loads stops the worker too', async () => {
    const { workers, starter } = fakeWorkers();
    const rt = new ModelRuntime(starter);
    const ctl = new AbortController();
    const pending = rt.open(identityModel(), ctl.signal);
    ctl.abort();
    await expect(pending).rejects.toBeInstanceOf(CancelledError);
    expect(workers[0].terminated).toBe(true);
  });

  it('a worker that dies fails the run in flight with the reason, and a new worker serves the next model', async () => {
    const { workers, starter } = fakeWorkers(new Promise(() => undefined));
    const rt = new ModelRuntime(starter);
    const net = await rt.open(identityModel());
    const pending = net.run('image', 'prior', tensor());
    workers[0].die('out of memory');
    await expect(pending).rejects.toThrow(/the network runtime stopped unexpectedly \(out of memory\); it is restarted for the next run/);
    expect(workers[0].terminated).toBe(true);
    await rt.open(identityModel());
    expect(rt.workersStarted).toBe(2);
  });
});
