// Entry of the page's model Web Worker (bundle it with ?worker&inline, iife, like the kernel
// workers): it waits for the MessagePort the page hands it, then serves models on that port
// with onnxruntime-web (WebAssembly CPU backend, one thread). The runtime's wasm is decoded
// from the page's own build on the first model opened.
import { configureOrt, openOrtNetwork } from '../core/model/ort-runtime';
import { serveModels } from './model-host';
import { embeddedOrtWasm } from './ort-wasm-embedded';

let ready: Promise<void> | undefined;

async function openModel(bytes: Uint8Array) {
  ready ??= embeddedOrtWasm().then(configureOrt);
  await ready;
  return openOrtNetwork(bytes);
}

self.onmessage = (e: MessageEvent<{ op: 'connect'; port: MessagePort }>) => {
  if (e.data?.op !== 'connect') throw new Error(`model worker: unexpected message ${JSON.stringify(e.data?.op)}`);
  serveModels(e.data.port, openModel);
};
