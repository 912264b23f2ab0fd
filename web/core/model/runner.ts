// What the network-prior pipeline needs from a network runtime: the model's signature and one
// call that runs it. In Node the CLI runs onnxruntime-web in its own thread (ort-runtime.ts); in
// the page a model worker hosts the runtime and the coordinator reaches it over a port.
import type { ModelSignature } from './signature';

/** A float32 tensor: values in row-major order and dimensions (NCHW for images). */
export interface NetworkTensor {
  data: Float32Array;
  dims: number[];
}

export interface NetworkRunner {
  /** Inputs and outputs as the runtime read them from the model. */
  readonly signature: ModelSignature;
  /**
   * Feeds `input` to the graph input `inputName` and returns the graph output `outputName`.
   * Rejects with InputError when the runtime refuses the run (for example a shape the model
   * does not accept), with CancelledError when `signal` fires.
   */
  run(inputName: string, outputName: string, input: NetworkTensor, signal?: AbortSignal): Promise<NetworkTensor>;
  /** Frees the session. */
  dispose(): Promise<void>;
}

/** Opens a model from its ONNX bytes (InputError when the runtime cannot load it). */
export type NetworkOpener = (modelBytes: Uint8Array) => Promise<NetworkRunner>;
