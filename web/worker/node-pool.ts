// Kernel workers under Node worker_threads, sharing one memory (the CLI and batch work).
import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import { createMemory } from '../core/engine/instance';
import { PoolWorkspace } from './pool-workspace';
import type { KernelResponse, WorkerPort } from './protocol';

/** A pool port over a worker_threads Worker. */
export function nodePort(worker: Worker): WorkerPort {
  return {
    post: (msg, transfer) => worker.postMessage(msg, transfer ?? []),
    onMessage: (h) => worker.on('message', (m: KernelResponse) => h(m)),
    onFailure: (h) => {
      worker.on('error', (e) => h(e.message));
      worker.on('exit', (code) => h(`exited with code ${code}`));
    },
    terminate: () => void worker.terminate(),
  };
}

/**
 * A pool of `workers` kernel workers (default: one per core) over one shared memory.
 * `workerUrl` is the bundled worker script (build/kernel-worker.mjs); `sharedModule` the shared
 * build of the engine (build/engine-shared.wasm).
 */
export async function createNodePool(
  sharedModule: WebAssembly.Module,
  workerUrl: URL,
  workers = availableParallelism(),
): Promise<PoolWorkspace> {
  const ports = Array.from({ length: Math.max(1, workers) }, () => {
    const w = new Worker(workerUrl);
    w.unref();
    return nodePort(w);
  });
  return PoolWorkspace.create(ports, sharedModule, createMemory(true));
}
