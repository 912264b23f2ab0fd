// Kernel workers under Node worker_threads, sharing one memory (the CLI and batch work).
import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import { createMemory } from '../core/engine/instance';
import { PoolWorkspace } from './pool-workspace';
import type { KernelResponse, WorkerPort } from './protocol';

function nodePort(worker: Worker): WorkerPort {
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
 * A pool of `workers` kernel workers (default: one per core). With `shared` (the default) they
 * share one memory and `module` must be the shared build (build/engine-shared.wasm); without,
 * each has a private memory (the module is build/engine.wasm) and the pool copies data between
 * them, as the page does when it is not cross-origin isolated.
 * `workerUrl` is the bundled worker script (build/kernel-worker.mjs).
 */
export async function createNodePool(
  module: WebAssembly.Module,
  workerUrl: URL,
  workers = availableParallelism(),
  shared = true,
): Promise<PoolWorkspace> {
  const ports = Array.from({ length: Math.max(1, workers) }, () => {
    const w = new Worker(workerUrl);
    w.unref();
    return nodePort(w);
  });
  return PoolWorkspace.create(ports, module, shared ? createMemory(true) : undefined);
}
