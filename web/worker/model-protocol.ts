// Messages between a NetworkRunner proxy (model-client.ts, in the coordinator) and the model
// host (model-host.ts, in the page's model worker, where onnxruntime-web runs). One model is
// open per host at a time. Arrays travel as transferred buffers.
import type { ModelSignature } from '../core/model/signature';

export const MODEL_PROTOCOL_VERSION = 1;

export type ToModelHost =
  | { id: number; op: 'open'; version: number; model: ArrayBuffer }
  | { id: number; op: 'run'; inputName: string; outputName: string; data: Float32Array; dims: number[] }
  | { id: number; op: 'close' };

export type FromModelHost =
  | { id: number; type: 'opened'; signature: ModelSignature }
  | { id: number; type: 'output'; data: Float32Array; dims: number[] }
  | { id: number; type: 'closed' }
  | { id: number; type: 'error'; error: { name: string; message: string } };

/** The part of a MessagePort (browser or Node) both ends use. */
export interface ModelPort {
  postMessage(message: unknown, transfer?: Transferable[]): void;
  addEventListener(type: 'message', listener: (e: MessageEvent) => void): void;
  start?(): void;
}
