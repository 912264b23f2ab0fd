// Starts the page's model worker (onnxruntime-web, browser-model-worker.ts) from the coordinator
// worker: inlined like every worker of the page (iife, blob URL), so it starts from a page
// opened from disk too, joined to the coordinator by a MessageChannel, and given the packed
// runtime wasm the page handed the coordinator.
import ModelWorker from './browser-model-worker?worker&inline';
import type { ModelWorkerStarter } from './model-runtime';
import type { ModelPort } from './model-protocol';
import type { PackedOrtRuntime } from './ort-runtime-pack';

/** A starter of model workers that run the given runtime. */
export const browserModelWorkerStarter = (runtime: PackedOrtRuntime): ModelWorkerStarter => () => {
  const worker = new ModelWorker();
  const channel = new MessageChannel();
  worker.postMessage({ op: 'connect', port: channel.port1, runtime }, [channel.port1]);
  return {
    port: channel.port2 as unknown as ModelPort,
    onFailure: (handler) => {
      worker.addEventListener('error', (e) => {
        // Handled here: the coordinator fails the model's calls and starts a new worker later.
        e.preventDefault();
        handler(e.message || 'a script error in the model worker');
      });
      worker.addEventListener('messageerror', () => handler('a message from the model worker could not be read'));
      channel.port2.addEventListener('messageerror', () => handler('a message from the model worker could not be read'));
    },
    terminate: () => {
      worker.terminate();
      channel.port2.close();
    },
  };
};
