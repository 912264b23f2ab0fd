// A workspace over a pool of kernel workers. With a shared memory every worker's instance sees
// the same bytes and the pool reads and writes them directly; with private memories each
// worker holds its own copy, and after each run the ranges a part declared it writes are
// copied to the other workers (the page opened from disk cannot share memory).
import { ensureMemory } from '../core/engine/instance';
import { checkRange } from '../core/engine/local-workspace';
import { asRange, Layout, resolveArgs, type Buf, type Part, type Workspace } from '../core/engine/workspace';
import { PROTOCOL_VERSION, type KernelRequest, type KernelResponse, type WorkerPort } from './protocol';

interface Pending {
  resolve: (r: { value: number; data?: ArrayBuffer }) => void;
  reject: (e: Error) => void;
}

class KernelClient {
  private nextId = 1;
  private readonly pending = new Map<number, Pending>();
  private failure?: string;

  constructor(readonly port: WorkerPort) {
    port.onMessage((res: KernelResponse) => {
      const p = this.pending.get(res.id);
      if (!p) return;
      this.pending.delete(res.id);
      if (res.ok) p.resolve({ value: res.value, data: res.data });
      else p.reject(new Error(res.error));
    });
    port.onFailure((reason) => {
      this.failure = reason;
      for (const p of this.pending.values()) p.reject(new Error(`engine worker stopped: ${reason}`));
      this.pending.clear();
    });
  }

  request(req: KernelRequest, transfer: ArrayBuffer[] = []): Promise<{ value: number; data?: ArrayBuffer }> {
    if (this.failure) return Promise.reject(new Error(`engine worker stopped: ${this.failure}`));
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      this.port.post({ id, ...req }, transfer);
    });
  }
}

export class PoolWorkspace implements Workspace {
  readonly parallelism: number;
  private readonly clients: KernelClient[];
  private readonly layout: Layout;

  private constructor(clients: KernelClient[], heapBase: number, private readonly memory?: WebAssembly.Memory) {
    this.clients = clients;
    this.parallelism = clients.length;
    this.layout = new Layout(heapBase);
  }

  /**
   * Starts the engine in each worker. Pass `memory` (a shared WebAssembly.Memory, with the
   * shared build of the module) to share one memory; omit it for private memories.
   */
  static async create(ports: WorkerPort[], module: WebAssembly.Module, memory?: WebAssembly.Memory): Promise<PoolWorkspace> {
    const clients = ports.map((p) => new KernelClient(p));
    try {
      const bases = await Promise.all(clients.map((c) => c.request({ op: 'init', module, memory, version: PROTOCOL_VERSION })));
      return new PoolWorkspace(clients, bases[0].value, memory);
    } catch (err) {
      for (const p of ports) p.terminate();
      throw err;
    }
  }

  private get shared(): boolean {
    return this.memory !== undefined;
  }

  get sharedMemory(): boolean {
    return this.shared;
  }

  alloc(name: string, length: number): Buf {
    const b = this.layout.alloc(name, length);
    if (this.memory) ensureMemory(this.memory, this.layout.bytes);
    return b;
  }

  allocPerWorker(name: string, length: number): Buf[] {
    return Array.from({ length: this.parallelism }, (_, i) => this.alloc(`${name}#${i}`, length));
  }

  reset(): void {
    this.layout.reset();
  }

  async write(buf: Buf, data: Float32Array | Int32Array, start = 0): Promise<void> {
    checkRange(buf, start, data.length);
    const bytes = new Uint8Array(data.buffer, data.byteOffset, data.length * 4);
    if (this.memory) {
      new Uint8Array(this.memory.buffer, buf.ptr + start * 4, bytes.length).set(bytes);
      return;
    }
    await Promise.all(
      this.clients.map((c) => {
        const copy = bytes.slice().buffer;
        return c.request({ op: 'write', ptr: buf.ptr + start * 4, data: copy, bytes: this.layout.bytes }, [copy]);
      }),
    );
  }

  async read(buf: Buf, start = 0, length = buf.length - start, worker = 0): Promise<Float32Array> {
    checkRange(buf, start, length);
    if (this.memory) {
      // A copy in an ordinary ArrayBuffer: slicing a shared buffer would give a shared one,
      // which IndexedDB cannot store and postMessage does not transfer.
      const out = new Float32Array(length);
      out.set(new Float32Array(this.memory.buffer, buf.ptr + start * 4, length));
      return out;
    }
    const r = await this.clients[worker].request({ op: 'read', ptr: buf.ptr + start * 4, byteLength: length * 4 });
    return new Float32Array(r.data!);
  }

  async run(parts: Part[]): Promise<number[]> {
    if (parts.length > this.parallelism) throw new RangeError(`${parts.length} parts for ${this.parallelism} workers`);
    const bytes = this.layout.bytes;
    const values = await Promise.all(
      parts.map((p, i) => this.clients[i].request({ op: 'call', kernel: p.kernel, args: resolveArgs(p.args), bytes })),
    );
    if (!this.shared && this.parallelism > 1) await this.share(parts);
    return values.map((v) => v.value);
  }

  /** Private memories: copies what each part wrote to every other worker. */
  private async share(parts: Part[]): Promise<void> {
    const copies: Promise<unknown>[] = [];
    for (let i = 0; i < parts.length; i++) {
      for (const w of parts[i].writes ?? []) {
        const r = asRange(w);
        if (r.length === 0) continue;
        const data = await this.read(r.buf, r.start, r.length, i);
        this.clients.forEach((c, j) => {
          if (j === i) return;
          const copy = data.slice().buffer;
          copies.push(c.request({ op: 'write', ptr: r.buf.ptr + r.start * 4, data: copy, bytes: this.layout.bytes }, [copy]));
        });
      }
    }
    await Promise.all(copies);
  }

  dispose(): void {
    for (const c of this.clients) c.port.terminate();
  }
}
