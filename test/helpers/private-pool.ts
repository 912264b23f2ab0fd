// A pool of kernel workers with private memories (the page's fallback when it is not
// cross-origin isolated), built from the bundled Node kernel worker: parts' declared writes are
// all that other workers see.
import { Worker } from 'node:worker_threads';
import { PoolWorkspace } from '../../web/worker/pool-workspace';
import type { KernelResponse, WorkerPort } from '../../web/worker/protocol';
import { engineModule } from './engine';

export async function privatePool(workers: number): Promise<PoolWorkspace> {
  const ports: WorkerPort[] = Array.from({ length: workers }, () => {
    const w = new Worker(new URL('../../build/kernel-worker.mjs', import.meta.url));
    return {
      post: (msg, transfer) => w.postMessage(msg, transfer ?? []),
      onMessage: (h) => w.on('message', (m: KernelResponse) => h(m)),
      onFailure: (h) => {
        w.on('error', (e) => h(e.message));
        w.on('exit', (code) => h(`exited with code ${code}`));
      },
      terminate: () => void w.terminate(),
    };
  });
  return PoolWorkspace.create(ports, engineModule());
}
