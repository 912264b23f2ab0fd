// Starts the engine's Web Workers in the page: kernel workers (one per core, at most 4) and the
// coordinator, joined by MessageChannels; the coordinator starts the model worker itself.
// Workers are inlined in the page (iife, blob URLs), so they start from a page opened from disk too.
import CoordinatorWorker from './coordinator-worker?worker&inline';
import KernelWorker from './browser-kernel-worker?worker&inline';
import { APP_PROTOCOL_VERSION, type ToCoordinator } from './app-protocol';
import type { EngineStarter } from './client';
import { embeddedOrtRuntime } from './ort-wasm-embedded';

/** Kernel workers for this machine. */
export function kernelWorkerCount(): number {
  return Math.max(1, Math.min(4, navigator.hardwareConcurrency || 2));
}

export const startBrowserEngine: EngineStarter = () => {
  const kernels = Array.from({ length: kernelWorkerCount() }, () => new KernelWorker());
  const coordinator = new CoordinatorWorker();
  const ports = kernels.map((k) => {
    const ch = new MessageChannel();
    k.postMessage({ op: 'connect', port: ch.port1 }, [ch.port1]);
    return ch.port2;
  });
  // The network runtime's wasm (compressed text) travels with the engine: model workers get it from the coordinator.
  const init: ToCoordinator = { op: 'init', version: APP_PROTOCOL_VERSION, kernelPorts: ports, ortRuntime: embeddedOrtRuntime() };
  coordinator.postMessage(init, ports);
  return { coordinator, watched: kernels };
};
