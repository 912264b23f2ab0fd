// Vite plugin for the page: onnxruntime-web's bundled build names its .wasm file with
// `new URL("ort-wasm-simd-threaded.wasm", import.meta.url)`, which Vite would turn into a
// second, base64 inlined copy of the 14 MB binary (measured: a 43 MB page instead of 5 MB).
// The page never fetches it (the model worker hands the runtime the bytes embedded by
// scripts/build-ort.mjs), so the reference is replaced by a name that cannot be fetched.
// Add it to both `plugins` and `worker.plugins` in vite.config.ts.

const BUNDLE = /onnxruntime-web[\\/]dist[\\/]ort(\.wasm)?\.bundle\.min\.mjs$/;
const REFERENCE = 'new URL("ort-wasm-simd-threaded.wasm",import.meta.url).href';
export const EMBEDDED_MARK = '"rimfill:ort-wasm-is-embedded"';

/** Replaces the .wasm references in the runtime bundle's code; throws when there are none. */
export function stripOrtWasmReference(code, id) {
  const parts = code.split(REFERENCE);
  if (parts.length === 1) throw new Error(`${id}: no reference to ort-wasm-simd-threaded.wasm found; check scripts/vite-ort.mjs against this onnxruntime-web version`);
  return parts.join(EMBEDDED_MARK);
}

export function ortWasmEmbedded() {
  return {
    name: 'rimfill-ort-wasm-embedded',
    enforce: 'pre',
    transform(code, id) {
      if (!BUNDLE.test(id)) return null;
      return { code: stripOrtWasmReference(code, id), map: null };
    },
  };
}
