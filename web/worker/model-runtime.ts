// The network runtime as the coordinator sees it: a model worker started on first use and
// kept for later models. Cancelling a model load or run stops that worker at once (a running
// WebAssembly call cannot be interrupted otherwise) and the next model starts a fresh one; a
// worker that dies fails the calls in flight instead of leaving them waiting.
import { CancelledError } from '../core/errors';
import type { NetworkRunner } from '../core/model/runner';
import { openNetworkOverPort } from './model-client';
import type { ModelPort } from './model-protocol';

/** A started model worker: the port to its model host, and its life. */
export interface ModelWorkerHandle {
  port: ModelPort;
  /** Registers the one callback for the worker's death (uncaught error, unreadable message). */
  onFailure(handler: (reason: string) => void): void;
  terminate(): void;
}

/** Starts a model worker (a Web Worker in the page; a thread or a stand-in under tests). */
export type ModelWorkerStarter = () => ModelWorkerHandle;

interface Running {
  handle: ModelWorkerHandle;
  /** Rejects when the worker stops; never resolves. */
  stopped: Promise<never>;
  stop: (reason: Error) => void;
}

export class ModelRuntime {
  private current?: Running;
  private started = 0;

  constructor(private readonly starter: ModelWorkerStarter) {}

  /** Model workers started so far (each cancel or failure costs a new one). */
  get workersStarted(): number {
    return this.started;
  }

  /**
   * Opens a model in the model worker. The runner's calls fail with CancelledError when a
   * cancel stopped the worker, and with an Error naming the reason when the worker died.
   */
  async open(modelBytes: Uint8Array, signal?: AbortSignal): Promise<NetworkRunner> {
    if (signal?.aborted) throw new CancelledError();
    const w = this.worker();
    const cancel = () => this.stop(w, new CancelledError());
    signal?.addEventListener('abort', cancel, { once: true });
    let inner: NetworkRunner;
    try {
      inner = await this.guard(w, openNetworkOverPort(w.handle.port, modelBytes, { onCancel: cancel }));
    } finally {
      signal?.removeEventListener('abort', cancel);
    }
    return {
      signature: inner.signature,
      run: (inputName, outputName, input, runSignal) => this.guard(w, inner.run(inputName, outputName, input, runSignal)),
      dispose: async () => {
        if (this.current === w) await this.guard(w, inner.dispose());
      },
    };
  }

  /** Stops the model worker (the page closes, or the engine restarts). */
  dispose(): void {
    if (this.current) this.stop(this.current, new Error('the network runtime was closed'));
  }

  private worker(): Running {
    if (this.current) return this.current;
    const handle = this.starter();
    this.started++;
    let stop!: (reason: Error) => void;
    const stopped = new Promise<never>((_, reject) => (stop = reject));
    stopped.catch(() => undefined);
    const running: Running = { handle, stopped, stop };
    handle.onFailure((reason) => this.stop(running, new Error(`the network runtime stopped unexpectedly (${reason}); it is restarted for the next run`)));
    this.current = running;
    return running;
  }

  private stop(w: Running, reason: Error): void {
    if (this.current === w) this.current = undefined;
    w.handle.terminate();
    w.stop(reason);
  }

  /** `p`, or the worker's stop reason if the worker stops first. */
  private guard<T>(w: Running, p: Promise<T>): Promise<T> {
    p.catch(() => undefined);
    return Promise.race([p, w.stopped]);
  }
}
