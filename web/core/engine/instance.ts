// Instantiates the engine module against a memory the host creates (the module imports it).
import { ABI_VERSION, MAX_PAGES, PAGE_BYTES, type EngineExports } from './abi';

/** A live engine instance and its memory. Never cache typed views of the memory: make them per use. */
export interface EngineInstance {
  exports: EngineExports;
  memory: WebAssembly.Memory;
}

/** Decodes base64 to bytes (atob: browsers and Node alike). */
export function base64ToBytes(b64: string): Uint8Array {
  const bin = atob(b64);
  const out = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

/** A fresh memory for an engine instance; shared memories need the shared build of the module. */
export function createMemory(shared: boolean, initialPages = 32): WebAssembly.Memory {
  return new WebAssembly.Memory({ initial: initialPages, maximum: MAX_PAGES, shared });
}

/** Instantiates a compiled engine module and checks its ABI version. */
export async function instantiateEngine(module: WebAssembly.Module, memory: WebAssembly.Memory): Promise<EngineInstance> {
  const instance = await WebAssembly.instantiate(module, {
    env: {
      memory,
      abort: (_msg: number, _file: number, line: number, col: number) => {
        throw new Error(`engine assertion failed at ${line}:${col}`);
      },
    },
  });
  const exports = instance.exports as unknown as EngineExports;
  const version = exports.abiVersion();
  if (version !== ABI_VERSION) {
    throw new Error(`engine ABI version ${version} does not match the host's ${ABI_VERSION}: rebuild with npm run build:wasm`);
  }
  return { exports, memory };
}

/** Grows memory so that at least `bytes` bytes exist. */
export function ensureMemory(memory: WebAssembly.Memory, bytes: number): void {
  const have = memory.buffer.byteLength;
  if (bytes <= have) return;
  const pages = Math.ceil((bytes - have) / PAGE_BYTES);
  if (have / PAGE_BYTES + pages > MAX_PAGES) {
    throw new RangeError(`the job needs ${(bytes / 2 ** 20).toFixed(0)} MiB of engine memory, more than the 4 GiB a WebAssembly memory can hold`);
  }
  try {
    memory.grow(pages);
  } catch (err) {
    // The browser or Node may refuse below the 4 GiB limit (address space, memory pressure).
    const why = err instanceof Error ? err.message : String(err);
    throw new RangeError(`the job needs ${(bytes / 2 ** 20).toFixed(0)} MiB of engine memory and the engine's memory could not grow from ${(have / 2 ** 20).toFixed(0)} MiB (${why}): bin the detector, take fewer views or a smaller grid, or close other tabs and programs`);
  }
}
