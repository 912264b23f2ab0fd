// Entry of a kernel Web Worker: it waits for the MessagePort the page hands it, then answers
// the coordinator's kernel requests on that port. It compiles its own engine module (see
// message-port.ts): the private-memory build, or the shared build when the pool shares memory.
import { engineSharedWasmBase64, engineWasmBase64 } from '../../build/engine-wasm.js';
import { base64ToBytes } from '../core/engine/instance';
import { KernelExecutor } from './executor';
import type { PortInit } from './message-port';
import type { KernelRequest } from './protocol';

const executor = new KernelExecutor();
const compile = (b64: string) => WebAssembly.compile(base64ToBytes(b64) as BufferSource);

type Incoming = { id: number } & (Exclude<KernelRequest, { op: 'init' }> | PortInit);

async function withModule(req: Incoming): Promise<{ id: number } & KernelRequest> {
  if (req.op !== 'init') return req;
  const module = await compile(req.memory ? engineSharedWasmBase64 : engineWasmBase64);
  return { ...req, module };
}

self.onmessage = (e: MessageEvent<{ op: 'connect'; port: MessagePort }>) => {
  if (e.data?.op !== 'connect') throw new Error(`kernel worker: unexpected message ${JSON.stringify(e.data?.op)}`);
  const port = e.data.port;
  port.onmessage = async (m: MessageEvent<Incoming>) => {
    const req = await withModule(m.data);
    const { res, transfer } = await executor.handle(req.id, req);
    port.postMessage(res, transfer);
  };
  port.onmessageerror = () => {
    // Uncaught on purpose: the page sees the worker's error event and restarts the engine.
    throw new Error('kernel worker: a request could not be read');
  };
};
