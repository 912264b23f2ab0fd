// The network runtime's WebAssembly in transit: gzip-compressed, base64 text with the runtime
// version it belongs to, handed from the page to the coordinator and on to each model worker it
// starts; the model worker decodes and inflates it (the page's main thread does no work on it).
// Kept apart from ort-wasm-embedded.ts so that the workers' bundles do not carry the text.
import { base64ToBytes } from '../core/engine/instance';
import { gunzip } from '../core/formats/gzip';
import { ORT_VERSION } from '../core/model/ort-runtime';

/** Upper bound for the inflated runtime (the 1.30.0 binary is 14.2 MB). */
const MAX_ORT_WASM_BYTES = 64 * 2 ** 20;

/** The runtime's wasm, gzip-compressed and base64-encoded, with the runtime version it belongs to. */
export interface PackedOrtRuntime {
  version: string;
  gzipBase64: string;
}

/** The runtime's .wasm bytes; throws when the packed runtime belongs to another runtime version. */
export async function inflateOrtRuntime(packed: PackedOrtRuntime): Promise<Uint8Array> {
  if (packed.version !== ORT_VERSION) throw new Error(`embedded onnxruntime-web wasm is version ${packed.version}, the code expects ${ORT_VERSION}: rebuild with npm run build:engine`);
  return gunzip(base64ToBytes(packed.gzipBase64), MAX_ORT_WASM_BYTES);
}
