// A NetworkRunner whose runtime lives in another thread (the page's model worker), reached over
// a port. Cancelling a run rejects at once and calls `onCancel`, whose owner stops the model
// worker (a running WebAssembly call cannot be interrupted) and starts a fresh one.
import { CancelledError, InputError } from '../core/errors';
import type { NetworkRunner, NetworkTensor } from '../core/model/runner';
import type { ModelSignature } from '../core/model/signature';
import { MODEL_PROTOCOL_VERSION, type FromModelHost, type ModelPort, type ToModelHost } from './model-protocol';

/** A request before it gets its id (Omit distributed over the union). */
type Request = ToModelHost extends infer T ? (T extends unknown ? Omit<T, 'id'> : never) : never;

type Pending = { resolve: (m: FromModelHost) => void; reject: (e: unknown) => void };

function asError(e: { name: string; message: string }): Error {
  if (e.name === 'InputError') return new InputError(e.message);
  if (e.name === 'CancelledError') return new CancelledError(e.message);
  const err = new Error(e.message);
  err.name = e.name;
  return err;
}

class Connection {
  private next = 1;
  private readonly pending = new Map<number, Pending>();

  constructor(private readonly port: ModelPort) {
    port.addEventListener('message', (e: MessageEvent<FromModelHost>) => {
      const p = this.pending.get(e.data.id);
      if (!p) return;
      this.pending.delete(e.data.id);
      if (e.data.type === 'error') p.reject(asError(e.data.error));
      else p.resolve(e.data);
    });
    port.start?.();
  }

  /** Sends a request; rejects with CancelledError as soon as `signal` fires. */
  request(msg: Request, transfer: Transferable[], signal?: AbortSignal, onCancel?: () => void): Promise<FromModelHost> {
    const id = this.next++;
    return new Promise((resolve, reject) => {
      if (signal?.aborted) return reject(new CancelledError());
      const abort = () => {
        this.pending.delete(id);
        onCancel?.();
        reject(new CancelledError());
      };
      signal?.addEventListener('abort', abort, { once: true });
      this.pending.set(id, {
        resolve: (m) => {
          signal?.removeEventListener('abort', abort);
          resolve(m);
        },
        reject: (e) => {
          signal?.removeEventListener('abort', abort);
          reject(e);
        },
      });
      this.port.postMessage({ ...msg, id }, transfer);
    });
  }
}

class PortNetworkRunner implements NetworkRunner {
  constructor(private readonly conn: Connection, readonly signature: ModelSignature, private readonly onCancel?: () => void) {}

  async run(inputName: string, outputName: string, input: NetworkTensor, signal?: AbortSignal): Promise<NetworkTensor> {
    const data = input.data.slice();
    const m = await this.conn.request({ op: 'run', inputName, outputName, data, dims: input.dims }, [data.buffer], signal, this.onCancel);
    if (m.type !== 'output') throw new Error(`model host answered ${m.type} to run`);
    return { data: m.data, dims: m.dims };
  }

  async dispose(): Promise<void> {
    await this.conn.request({ op: 'close' }, []);
  }
}

export interface PortRunnerOptions {
  /** Called when a run is cancelled: stop the model worker behind the port. */
  onCancel?: () => void;
}

/** Opens a model in the host behind `port` (InputError when its runtime cannot load it). */
export async function openNetworkOverPort(port: ModelPort, modelBytes: Uint8Array, options: PortRunnerOptions = {}): Promise<NetworkRunner> {
  const conn = new Connection(port);
  const model = modelBytes.slice().buffer;
  const m = await conn.request({ op: 'open', version: MODEL_PROTOCOL_VERSION, model }, [model]);
  if (m.type !== 'opened') throw new Error(`model host answered ${m.type} to open`);
  return new PortNetworkRunner(conn, m.signature, options.onCancel);
}
