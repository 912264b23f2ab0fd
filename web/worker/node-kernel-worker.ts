// Entry of a kernel worker under Node worker_threads (bundled to build/kernel-worker.mjs).
import { parentPort } from 'node:worker_threads';
import { KernelExecutor } from './executor';
import type { KernelRequest } from './protocol';

const executor = new KernelExecutor();
parentPort!.on('message', async (msg: { id: number } & KernelRequest) => {
  const { res, transfer } = await executor.handle(msg.id, msg);
  parentPort!.postMessage(res, transfer);
});
