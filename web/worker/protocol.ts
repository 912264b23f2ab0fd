// Messages between a workspace pool (web/worker/pool-workspace.ts) and its kernel workers
// (web/worker/executor.ts). Bulk data travels as transferred ArrayBuffers.
import type { KernelName } from '../core/engine/abi';

export const PROTOCOL_VERSION = 1;

export type KernelRequest =
  | { op: 'init'; module: WebAssembly.Module; memory?: WebAssembly.Memory; version: number }
  | { op: 'write'; ptr: number; data: ArrayBuffer; bytes: number }
  | { op: 'read'; ptr: number; byteLength: number }
  | { op: 'call'; kernel: KernelName; args: number[]; bytes: number };

export type KernelResponse =
  | { id: number; ok: true; value: number; data?: ArrayBuffer }
  | { id: number; ok: false; error: string };

/** The transport a pool needs from a worker, whatever runs it (Node worker_threads or Web Worker). */
export interface WorkerPort {
  post(msg: { id: number } & KernelRequest, transfer?: ArrayBuffer[]): void;
  onMessage(handler: (msg: KernelResponse) => void): void;
  /** Called when the worker dies (uncaught error or exit). */
  onFailure(handler: (reason: string) => void): void;
  terminate(): void;
}
