// The network runtime in Node: onnxruntime-web's WebAssembly build, read from our build/
// directory (scripts/build-ort.mjs copies it there), run in the calling thread.
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { NetworkRunner } from '../core/model/runner';

const WASM = 'ort-wasm-simd-threaded.wasm';

/** build/ next to the bundled CLI (build/cli.mjs), or relative to this source file under tests. */
function wasmPath(): string {
  const beside = fileURLToPath(new URL(WASM, import.meta.url));
  if (existsSync(beside)) return beside;
  const built = fileURLToPath(new URL(`../../build/${WASM}`, import.meta.url));
  if (!existsSync(built)) throw new Error(`${built} is missing: run npm run build:engine`);
  return built;
}

/** Opens an ONNX model in this thread (InputError when it is not a model the runtime can load). */
export async function openNetworkNode(modelBytes: Uint8Array): Promise<NetworkRunner> {
  // Loaded on first use, so that commands without a network do not pay for the runtime.
  const { configureOrt, openOrtNetwork } = await import('../core/model/ort-runtime');
  configureOrt(new Uint8Array(readFileSync(wasmPath())));
  return openOrtNetwork(modelBytes);
}
