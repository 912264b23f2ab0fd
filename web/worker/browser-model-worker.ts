// Entry of the page's model Web Worker (started by the coordinator worker, ?worker&inline,
// iife): it waits for the MessagePort and the packed runtime the coordinator hands it, then
// serves models on that port with onnxruntime-web (WebAssembly CPU backend, one thread). The
// runtime's wasm is inflated from the page's own build on the first model opened.
import { configureOrt, openOrtNetwork } from '../core/model/ort-runtime';
import { serveModels } from './model-host';
import { inflateOrtRuntime, type PackedOrtRuntime } from './ort-runtime-pack';

let ready: Promise<void> | undefined;

self.onmessage = (e: MessageEvent<{ op: 'connect'; port: MessagePort; runtime: PackedOrtRuntime }>) => {
  if (e.data?.op !== 'connect') throw new Error(`model worker: unexpected message ${JSON.stringify(e.data?.op)}`);
  const { port, runtime } = e.data;
  serveModels(port, async (bytes) => {
    ready ??= inflateOrtRuntime(runtime).then(configureOrt);
    await ready;
    return openOrtNetwork(bytes);
  });
};
