// The network runtime's WebAssembly in transit: gzip-compressed bytes with the runtime version
// they belong to, handed from the page to the coordinator and on to each model worker it
// starts; the model worker inflates them. (Kept apart from ort-wasm-embedded.ts so that the
// workers' bundles do not carry the embedded text.)
import { gunzip } from '../core/formats/gzip';
import { ORT_VERSION } from '../core/model/ort-runtime';

/** Upper bound for the inflated runtime (the 1.30.0 binary is 14.2 MB). */
const MAX_ORT_WASM_BYTES = 64 * 2 ** 20;

/** The runtime's wasm, gzip-compressed, with the runtime version it belongs to. */
export interface PackedOrtRuntime {
  version: string;
  gzip: Uint8Array;
}

/** The runtime's .wasm bytes; throws when the packed runtime belongs to another runtime version. */
export async function inflateOrtRuntime(packed: PackedOrtRuntime): Promise<Uint8Array> {
  if (packed.version !== ORT_VERSION) throw new Error(`embedded onnxruntime-web wasm is version ${packed.version}, the code expects ${ORT_VERSION}: rebuild with npm run build:engine`);
  return gunzip(packed.gzip, MAX_ORT_WASM_BYTES);
}
