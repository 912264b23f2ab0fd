// The network runtime's WebAssembly as the page carries it: gzip + base64 inside our own build
// (build/ort-wasm.js, made by scripts/build-ort.mjs), decoded on first use. No fetch: works in a
// page opened from disk and under a Content-Security-Policy with connect-src 'none'.
import { ortVersion, ortWasmGzipBase64 } from '../../build/ort-wasm.js';
import { base64ToBytes } from '../core/engine/instance';
import { gunzip } from '../core/formats/gzip';
import { ORT_VERSION } from '../core/model/ort-runtime';

/** Upper bound for the inflated runtime (the 1.30.0 binary is 14.2 MB). */
const MAX_ORT_WASM_BYTES = 64 * 2 ** 20;

/** The runtime's .wasm bytes; throws when the embedded build belongs to another runtime version. */
export async function embeddedOrtWasm(): Promise<Uint8Array> {
  if (ortVersion !== ORT_VERSION) throw new Error(`embedded onnxruntime-web wasm is version ${ortVersion}, the code expects ${ORT_VERSION}: rebuild with npm run build:engine`);
  return gunzip(base64ToBytes(ortWasmGzipBase64), MAX_ORT_WASM_BYTES);
}
