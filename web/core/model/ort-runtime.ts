// onnxruntime-web on its WebAssembly (CPU) backend, in the calling thread: one runtime per
// thread (Node CLI, or the page's model worker). The runtime's .wasm comes from our own build
// (the caller hands its bytes over: no fetch, works from file://); one thread, no proxy
// worker, so no cross-origin isolation is needed.
import * as ort from 'onnxruntime-web/wasm';
import { CancelledError, InputError, throwIfCancelled } from '../errors';
import type { NetworkRunner, NetworkTensor } from './runner';
import type { ModelSignature, TensorSignature } from './signature';

/** The onnxruntime-web version this build pins (package.json) and whose .wasm it embeds. */
export const ORT_VERSION = '1.30.0';

/** Largest model file accepted: the runtime's memory (4 GiB) must also hold its working tensors. */
export const MAX_MODEL_BYTES = 2 ** 30;

let configured = false;

/**
 * Gives the runtime its WebAssembly binary (ort-wasm-simd-threaded.wasm of the pinned version)
 * and fixes one thread without a proxy worker. Call once per thread before opening models.
 */
export function configureOrt(wasmBinary: Uint8Array): void {
  if (configured) return;
  ort.env.wasm.wasmBinary = wasmBinary;
  ort.env.wasm.numThreads = 1;
  ort.env.wasm.proxy = false;
  ort.env.logLevel = 'error';
  configured = true;
}

function signatureOf(list: readonly ort.InferenceSession.ValueMetadata[]): TensorSignature[] {
  return list.map((m) => (m.isTensor ? { name: m.name, isTensor: true, type: m.type, shape: [...m.shape] } : { name: m.name, isTensor: false, shape: [] }));
}

const reason = (err: unknown): string => (err instanceof Error ? err.message : String(err)).replace(/\s+/g, ' ').trim();

class OrtRunner implements NetworkRunner {
  readonly signature: ModelSignature;

  constructor(private readonly session: ort.InferenceSession) {
    this.signature = { inputs: signatureOf(session.inputMetadata), outputs: signatureOf(session.outputMetadata) };
  }

  async run(inputName: string, outputName: string, input: NetworkTensor, signal?: AbortSignal): Promise<NetworkTensor> {
    throwIfCancelled(signal);
    const feed = new ort.Tensor('float32', input.data, input.dims);
    let result: ort.InferenceSession.OnnxValueMapType;
    try {
      result = await this.session.run({ [inputName]: feed }, [outputName]);
    } catch (err) {
      throw new InputError(`the network did not run on a ${input.dims.join(' x ')} input: ${reason(err)}`);
    } finally {
      feed.dispose();
    }
    const out = result[outputName];
    try {
      if (signal?.aborted) throw new CancelledError();
      if (out.type !== 'float32') throw new InputError(`model output "${outputName}": element type ${out.type}, expected float32`);
      return { data: new Float32Array(out.data as Float32Array), dims: out.dims.map(Number) };
    } finally {
      out.dispose();
    }
  }

  async dispose(): Promise<void> {
    await this.session.release();
  }
}

/** Opens an ONNX model in the runtime. Throws InputError when the bytes are not a model it can load. */
export async function openOrtNetwork(modelBytes: Uint8Array): Promise<NetworkRunner> {
  if (!configured) throw new Error('onnxruntime-web used before configureOrt() gave it its WebAssembly binary');
  if (modelBytes.length === 0) throw new InputError('model file: empty, expected an ONNX model');
  if (modelBytes.length > MAX_MODEL_BYTES) {
    throw new InputError(`model file: ${modelBytes.length} bytes is more than the ${MAX_MODEL_BYTES}-byte limit of the in-page runtime`);
  }
  let session: ort.InferenceSession;
  try {
    session = await ort.InferenceSession.create(modelBytes, { executionProviders: ['wasm'], graphOptimizationLevel: 'all' });
  } catch (err) {
    const why = reason(err);
    if (/protobuf parsing failed/i.test(why)) throw new InputError(`model file: not an ONNX model (the runtime could not parse it: ${why})`);
    throw new InputError(`model file: the ONNX runtime ${ORT_VERSION} cannot load this model: ${why}`);
  }
  return new OrtRunner(session);
}
