// Test helpers: load the built engine (npm test builds it first) into a local workspace.
import { readFileSync } from 'node:fs';
import { LocalWorkspace } from '../../web/core/engine/local-workspace';

let module: WebAssembly.Module | undefined;

/** The compiled private-memory engine module (build/engine.wasm). */
export function engineModule(): WebAssembly.Module {
  module ??= new WebAssembly.Module(readFileSync(new URL('../../build/engine.wasm', import.meta.url)));
  return module;
}

/** A fresh local workspace; `parts` > 1 splits work as a pool would. */
export function localWorkspace(parts = 1): Promise<LocalWorkspace> {
  return LocalWorkspace.create(engineModule(), parts);
}
