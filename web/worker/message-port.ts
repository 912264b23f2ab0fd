// A kernel worker reached through a MessagePort (the page creates the kernel workers and hands
// the coordinator one port to each; the page watches the workers for crashes).
//
// A WebAssembly.Module cannot cross a MessagePort in a page opened from disk (measured in
// Chromium 156: the receiver gets a messageerror; posting to a Worker directly works), so the
// kernel workers compile their own copy of the engine (browser-kernel-worker.ts) and the
// module is left out of the 'init' message here.
import type { KernelRequest, KernelResponse, WorkerPort } from './protocol';

/** The WorkerPort a PoolWorkspace needs, over a MessagePort. */
export function messagePortAsWorkerPort(port: MessagePort): WorkerPort {
  return {
    post: (msg, transfer) => {
      if (msg.op === 'init') {
        const { module: _compiledHere, ...rest } = msg;
        port.postMessage(rest, transfer ?? []);
      } else {
        port.postMessage(msg, transfer ?? []);
      }
    },
    onMessage: (h) => {
      port.onmessage = (e: MessageEvent<KernelResponse>) => h(e.data);
    },
    onFailure: (h) => {
      port.onmessageerror = () => h('a message from the kernel worker could not be read');
    },
    terminate: () => port.close(),
  };
}

/** An 'init' request as it arrives over a port: without the module. */
export type PortInit = Omit<Extract<KernelRequest, { op: 'init' }>, 'module'>;
