// The network runtime's WebAssembly as the page carries it: gzip + base64 inside our own build
// (build/ort-wasm.js, made by scripts/build-ort.mjs). Only the page's main script imports this:
// it holds the text once and hands it to the engine as it is (ort-runtime-pack.ts).
// No fetch: works in a page opened from disk and under a Content-Security-Policy with
// connect-src 'none'.
import { ortVersion, ortWasmGzipBase64 } from '../../build/ort-wasm.js';
import type { PackedOrtRuntime } from './ort-runtime-pack';

/** The packed runtime embedded in this build (about 4.9 MB of text). */
export function embeddedOrtRuntime(): PackedOrtRuntime {
  return { version: ortVersion, gzipBase64: ortWasmGzipBase64 };
}
