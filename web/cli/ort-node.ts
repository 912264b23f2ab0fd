// The network runtime in Node: onnxruntime-web's WebAssembly build, read from our build/
// directory (scripts/build-ort.mjs copies it there), run in the calling thread.
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { setFlagsFromString } from 'node:v8';
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

let compiled = false;

/** Opens an ONNX model in this thread (InputError when it is not a model the runtime can load). */
export async function openNetworkNode(modelBytes: Uint8Array): Promise<NetworkRunner> {
  // Loaded on first use, so that commands without a network do not pay for the runtime.
  const { configureOrt, openOrtNetwork } = await import('../core/model/ort-runtime');
  if (compiled) return openOrtNetwork(modelBytes);
  configureOrt(new Uint8Array(readFileSync(wasmPath())));
  // The CLI compiles WebAssembly with V8's optimizing tier only (engine-node.ts: --no-liftoff),
  // right for the engine's few long kernel calls; the runtime's 14 MB module would then take
  // 4-9 s to compile (measured). Its first open compiles it: with the baseline tier (hot code
  // is tiered up while it runs, 1-2 s), then the CLI's setting is restored.
  setFlagsFromString('--liftoff');
  try {
    return await openOrtNetwork(modelBytes);
  } finally {
    setFlagsFromString('--no-liftoff');
    compiled = true;
  }
}
