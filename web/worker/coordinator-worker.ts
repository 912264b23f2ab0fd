// Entry of the coordinator Web Worker. It compiles the engine once, builds a kernel pool over
// the ports the page hands it (one shared memory when the page is cross-origin isolated,
// private memories otherwise, e.g. opened from disk) and answers requests (coordinator.ts).
import { engineSharedWasmBase64, engineWasmBase64 } from '../../build/engine-wasm.js';
import { base64ToBytes, createMemory } from '../core/engine/instance';
import type { RunHooks } from '../core/run-hooks';
import { InputError } from '../core/errors';
import { StorageFullError } from '../store/quota';
import { APP_PROTOCOL_VERSION, type AppRequest, type FromCoordinator, type ToCoordinator, type WireError } from './app-protocol';
import { Coordinator } from './coordinator';
import { replyTransfer } from './library-ops';
import { browserModelWorkerStarter } from './browser-model-starter';
import { messagePortAsWorkerPort } from './message-port';
import { ModelRuntime } from './model-runtime';
import type { PackedOrtRuntime } from './ort-runtime-pack';
import { PoolWorkspace } from './pool-workspace';

const post = (msg: FromCoordinator, transfer: Transferable[] = []) => (self as unknown as Worker).postMessage(msg, transfer);
const running = new Map<number, AbortController>();
let coordinator: Coordinator | undefined;

function toWire(err: unknown): WireError {
  if (err instanceof StorageFullError) return { name: err.name, message: err.message, details: err.largest };
  // The page shows what to do in its own words, not as command-line options.
  if (err instanceof InputError) return { name: err.name, message: err.pageMessage };
  if (err instanceof Error) return { name: err.name, message: err.message };
  return { name: 'Error', message: String(err) };
}

function start(kernelPorts: MessagePort[], ortRuntime: PackedOrtRuntime): Coordinator {
  const shared = (self as unknown as { crossOriginIsolated?: boolean }).crossOriginIsolated === true && typeof SharedArrayBuffer !== 'undefined';
  const models = new ModelRuntime(browserModelWorkerStarter(ortRuntime));
  return new Coordinator({
    sharedMemory: shared,
    openModel: (onnx, signal) => models.open(onnx, signal),
    openWorkspace: async () => {
      const module = await WebAssembly.compile(base64ToBytes(shared ? engineSharedWasmBase64 : engineWasmBase64) as BufferSource);
      return PoolWorkspace.create(kernelPorts.map(messagePortAsWorkerPort), module, shared ? createMemory(true) : undefined);
    },
  });
}

async function answer(id: number, req: AppRequest): Promise<void> {
  const controller = new AbortController();
  running.set(id, controller);
  let last = 0;
  const hooks: RunHooks = {
    signal: controller.signal,
    onProgress: (fraction, stage) => {
      const t = performance.now();
      if (fraction < 1 && t - last < 100) return;
      last = t;
      post({ id, type: 'progress', fraction, stage });
    },
  };
  try {
    if (!coordinator) throw new Error('engine used before it was started');
    const value = await coordinator.handle(req, hooks);
    post({ id, type: 'done', value }, replyTransfer(value));
  } catch (err) {
    post({ id, type: 'error', error: toWire(err) });
  } finally {
    running.delete(id);
  }
}

self.onmessage = (e: MessageEvent<ToCoordinator>) => {
  const msg = e.data;
  if (msg.op === 'init') {
    if (msg.version !== APP_PROTOCOL_VERSION) throw new Error(`page speaks protocol ${msg.version}, engine ${APP_PROTOCOL_VERSION}`);
    coordinator = start(msg.kernelPorts, msg.ortRuntime);
    return;
  }
  if (msg.op === 'cancel') {
    running.get(msg.id)?.abort();
    return;
  }
  void answer(msg.id, msg);
};
