// The page's model plumbing, run in Node: the host serves models over a MessagePort with the
// Node runtime, the client is a NetworkRunner over the other end; the embedded (gzip + base64)
// runtime wasm decodes to the binary of the pinned version.
import { readFileSync } from 'node:fs';
import { MessageChannel } from 'node:worker_threads';
import { afterEach, describe, expect, it } from 'vitest';
import { CancelledError, InputError } from '../../web/core/errors';
import type { NetworkOpener } from '../../web/core/model/runner';
import { openNetworkOverPort } from '../../web/worker/model-client';
import { serveModels } from '../../web/worker/model-host';
import type { ModelPort } from '../../web/worker/model-protocol';
import { inflateOrtRuntime } from '../../web/worker/ort-runtime-pack';
import { embeddedOrtRuntime } from '../../web/worker/ort-wasm-embedded';
import { identityModel, openNetworkNode, smoothingModel } from '../helpers/networks';

/** The runtime's .wasm bytes as the page carries them. */
const embeddedOrtWasm = () => inflateOrtRuntime(embeddedOrtRuntime());

const channels: MessageChannel[] = [];

function connect(open: NetworkOpener = openNetworkNode): ModelPort {
  const ch = new MessageChannel();
  channels.push(ch);
  serveModels(ch.port1 as unknown as ModelPort, open);
  return ch.port2 as unknown as ModelPort;
}

afterEach(() => {
  for (const ch of channels.splice(0)) {
    ch.port1.close();
    ch.port2.close();
  }
});

describe('model worker plumbing', () => {
  it('the embedded runtime wasm decodes to the pinned binary', async () => {
    const wasm = await embeddedOrtWasm();
    const file = readFileSync(new URL('../../build/ort-wasm-simd-threaded.wasm', import.meta.url));
    expect(wasm.length).toBe(file.length);
    expect(Buffer.from(wasm).equals(file)).toBe(true);
  });

  it('opens a model over the port, reports its signature and runs it', async () => {
    const k = Float32Array.from([0, 0.25, 0, 0.25, 0, 0.25, 0, 0.25, 0]);
    const net = await openNetworkOverPort(connect(), smoothingModel(k));
    expect(net.signature.inputs[0]).toEqual({ name: 'image', isTensor: true, type: 'float32', shape: [1, 1, 'H', 'W'] });
    const x = Float32Array.from({ length: 25 }, (_, i) => i);
    const out = await net.run('image', 'prior', { data: x, dims: [1, 1, 5, 5] });
    // Centre pixel (2, 2): mean of its four neighbours 7, 11, 13, 17.
    expect(out.data[12]).toBeCloseTo(12, 5);
    expect(x[12]).toBe(12); // the caller's array is not detached
    await net.dispose();
  });

  it('a file that is not ONNX is refused across the port as InputError', async () => {
    const err = await openNetworkOverPort(connect(), new TextEncoder().encode('hello')).catch((e) => e);
    expect(err).toBeInstanceOf(InputError);
    expect(err.message).toMatch(/^model file: not an ONNX model/);
  });

  it('cancel rejects at once and asks the owner to stop the worker', async () => {
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    // A runtime whose run waits until released, standing for a long inference.
    const slowOpen: NetworkOpener = async (bytes) => {
      const inner = await openNetworkNode(bytes);
      return { signature: inner.signature, dispose: () => inner.dispose(), run: async (...a) => {
        await held;
        return inner.run(...a);
      } };
    };
    let stopped = 0;
    const net = await openNetworkOverPort(connect(slowOpen), identityModel(), { onCancel: () => stopped++ });
    const ctl = new AbortController();
    const pending = net.run('image', 'prior', { data: new Float32Array(4), dims: [1, 1, 2, 2] }, ctl.signal);
    ctl.abort();
    await expect(pending).rejects.toBeInstanceOf(CancelledError);
    expect(stopped).toBe(1);
    release();
  });
});

describe('page build of the runtime', () => {
  it('the Vite plugin finds and neutralizes every .wasm reference of the pinned runtime bundle', async () => {
    const { stripOrtWasmReference, EMBEDDED_MARK } = await import('../../scripts/vite-ort.mjs');
    const id = new URL('../../node_modules/onnxruntime-web/dist/ort.wasm.bundle.min.mjs', import.meta.url).pathname;
    const code = readFileSync(id, 'utf8');
    const out = stripOrtWasmReference(code, id);
    expect(out).not.toMatch(/ort-wasm-simd-threaded\.wasm"\s*,\s*import\.meta\.url/);
    expect(out.split(EMBEDDED_MARK).length - 1).toBe(2);
    expect(() => stripOrtWasmReference('const x = 1;', 'other.mjs')).toThrow(/no reference to ort-wasm-simd-threaded.wasm/);
  });
});
