// The body of a kernel worker: owns one engine instance and answers KernelRequests. It has no
// policy: the pool on the other side decides layout and work split.
import { createMemory, ensureMemory, instantiateEngine, type EngineInstance } from '../core/engine/instance';
import { PROTOCOL_VERSION, type KernelRequest, type KernelResponse } from './protocol';

export class KernelExecutor {
  private engine?: EngineInstance;

  /** Handles one request; returns the response and the buffers to transfer with it. */
  async handle(id: number, req: KernelRequest): Promise<{ res: KernelResponse; transfer: ArrayBuffer[] }> {
    try {
      if (req.op === 'init') {
        if (req.version !== PROTOCOL_VERSION) throw new Error(`protocol ${req.version}, worker speaks ${PROTOCOL_VERSION}`);
        this.engine = await instantiateEngine(req.module, req.memory ?? createMemory(false));
        return ok(id, this.engine.exports.heapBase());
      }
      const e = this.engine;
      if (!e) throw new Error('kernel worker used before init');
      if (req.op === 'write') {
        ensureMemory(e.memory, req.bytes);
        new Uint8Array(e.memory.buffer, req.ptr, req.data.byteLength).set(new Uint8Array(req.data));
        return ok(id, 0);
      }
      if (req.op === 'read') {
        const data = e.memory.buffer.slice(req.ptr, req.ptr + req.byteLength) as ArrayBuffer;
        return { res: { id, ok: true, value: 0, data }, transfer: [data] };
      }
      ensureMemory(e.memory, req.bytes);
      return ok(id, e.exports[req.kernel](...req.args));
    } catch (err) {
      return { res: { id, ok: false, error: err instanceof Error ? err.message : String(err) }, transfer: [] };
    }
  }
}

function ok(id: number, value: number): { res: KernelResponse; transfer: ArrayBuffer[] } {
  return { res: { id, ok: true, value }, transfer: [] };
}
