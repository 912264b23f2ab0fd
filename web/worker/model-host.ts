// The model host: answers open/run/close requests on a port with the runtime of its thread
// (onnxruntime-web in the page's model worker; the Node runtime under tests). Requests are
// handled one at a time, in order.
import type { NetworkOpener, NetworkRunner } from '../core/model/runner';
import { MODEL_PROTOCOL_VERSION, type FromModelHost, type ModelPort, type ToModelHost } from './model-protocol';

/** Serves models on `port`, opening them with `open`. */
export function serveModels(port: ModelPort, open: NetworkOpener): void {
  let runner: NetworkRunner | undefined;
  let queue: Promise<void> = Promise.resolve();
  const reply = (msg: FromModelHost, transfer: Transferable[] = []) => port.postMessage(msg, transfer);

  async function handle(req: ToModelHost): Promise<void> {
    try {
      switch (req.op) {
        case 'open': {
          if (req.version !== MODEL_PROTOCOL_VERSION) throw new Error(`model protocol ${req.version} does not match the host's ${MODEL_PROTOCOL_VERSION}`);
          await runner?.dispose();
          runner = undefined;
          runner = await open(new Uint8Array(req.model));
          reply({ id: req.id, type: 'opened', signature: runner.signature });
          return;
        }
        case 'run': {
          if (!runner) throw new Error('model host: run before open');
          const out = await runner.run(req.inputName, req.outputName, { data: req.data, dims: req.dims });
          reply({ id: req.id, type: 'output', data: out.data, dims: out.dims }, [out.data.buffer]);
          return;
        }
        case 'close': {
          await runner?.dispose();
          runner = undefined;
          reply({ id: req.id, type: 'closed' });
          return;
        }
      }
    } catch (err) {
      const e = err instanceof Error ? err : new Error(String(err));
      reply({ id: req.id, type: 'error', error: { name: e.name, message: e.message } });
    }
  }

  port.addEventListener('message', (e: MessageEvent<ToModelHost>) => {
    const req = e.data;
    queue = queue.then(() => handle(req));
  });
  port.start?.();
}
