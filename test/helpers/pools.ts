// Test helpers: real worker pools in Node (npm test builds build/kernel-worker.mjs first), with
// one shared memory (as the CLI runs) or private memories (as the page runs from disk).
import { Worker } from 'node:worker_threads';
import type { Workspace } from '../../web/core/engine/workspace';
import { openWorkspace } from '../../web/cli/engine-node';
import { nodePort } from '../../web/worker/node-pool';
import { PoolWorkspace } from '../../web/worker/pool-workspace';
import { engineModule } from './engine';

/** `workers` kernel workers over one shared memory. */
export function sharedPool(workers: number): Promise<Workspace> {
  return openWorkspace(workers);
}

/** `workers` kernel workers, each with its own memory (the pool copies declared writes). */
export function privatePool(workers: number): Promise<Workspace> {
  const url = new URL('../../build/kernel-worker.mjs', import.meta.url);
  const ports = Array.from({ length: workers }, () => {
    const w = new Worker(url);
    w.unref();
    return nodePort(w);
  });
  return PoolWorkspace.create(ports, engineModule());
}
