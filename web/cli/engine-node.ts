// Loading the engine in Node: the built wasm files and the bundled kernel worker sit in build/.
import { readFileSync, existsSync } from 'node:fs';
import { setFlagsFromString } from 'node:v8';
import { fileURLToPath } from 'node:url';
import { LocalWorkspace } from '../core/engine/local-workspace';
import type { Workspace } from '../core/engine/workspace';
import { createNodePool } from '../worker/node-pool';

/** build/ next to the bundled CLI (build/cli.mjs), or relative to this source file under tests. */
function buildDir(): URL {
  const here = new URL('.', import.meta.url);
  if (existsSync(fileURLToPath(new URL('engine.wasm', here)))) return here;
  return new URL('../../build/', import.meta.url);
}

// A CLI run calls each kernel a few times on large data: compile with the optimizing tier from
// the start instead of V8's baseline tier (about 2x slower code, measured), which a long
// kernel call would otherwise run in until it returns. Must precede the first compile.
setFlagsFromString('--no-liftoff');

function load(name: string): WebAssembly.Module {
  const url = new URL(name, buildDir());
  if (!existsSync(fileURLToPath(url))) throw new Error(`${fileURLToPath(url)} is missing: run npm run build:engine`);
  return new WebAssembly.Module(readFileSync(url));
}

/**
 * A workspace for CLI work: `workers` kernel workers over shared memory (default: one per
 * core), or the calling thread alone when workers is 0.
 */
export async function openWorkspace(workers?: number): Promise<Workspace> {
  if (workers === 0) return LocalWorkspace.create(load('engine.wasm'));
  return createNodePool(load('engine-shared.wasm'), new URL('kernel-worker.mjs', buildDir()), workers);
}
