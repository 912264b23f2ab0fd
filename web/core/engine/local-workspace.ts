// A workspace on one engine instance in the calling thread: for tests, small jobs and the
// single-worker mode. Parts run one after another.
import { createMemory, ensureMemory, instantiateEngine, type EngineInstance } from './instance';
import { Layout, resolveArgs, type Buf, type Part, type Workspace } from './workspace';

export class LocalWorkspace implements Workspace {
  readonly parallelism: number;
  /** Every part runs on the one instance, so all see the same memory. */
  readonly sharedMemory = true;
  private readonly layout: Layout;

  private constructor(private readonly engine: EngineInstance, parallelism: number) {
    this.parallelism = parallelism;
    this.layout = new Layout(engine.exports.heapBase());
  }

  /**
   * Creates a local workspace. `parallelism` > 1 splits work into that many parts run in
   * sequence (tests use it to check that splitting does not change results).
   */
  static async create(module: WebAssembly.Module, parallelism = 1): Promise<LocalWorkspace> {
    return new LocalWorkspace(await instantiateEngine(module, createMemory(false)), parallelism);
  }

  alloc(name: string, length: number): Buf {
    const b = this.layout.alloc(name, length);
    ensureMemory(this.engine.memory, this.layout.bytes);
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
    new Uint8Array(this.engine.memory.buffer, buf.ptr + start * 4, data.length * 4).set(
      new Uint8Array(data.buffer, data.byteOffset, data.length * 4),
    );
  }

  async read(buf: Buf, start = 0, length = buf.length - start): Promise<Float32Array> {
    checkRange(buf, start, length);
    return new Float32Array(this.engine.memory.buffer.slice(buf.ptr + start * 4, buf.ptr + (start + length) * 4));
  }

  async run(parts: Part[]): Promise<number[]> {
    if (parts.length > this.parallelism) throw new RangeError(`${parts.length} parts for ${this.parallelism} workers`);
    return parts.map((p) => this.engine.exports[p.kernel](...resolveArgs(p.args)));
  }

  dispose(): void {}
}

/** Throws when [start, start+length) is not inside buf. */
export function checkRange(buf: Buf, start: number, length: number): void {
  if (start < 0 || length < 0 || start + length > buf.length) {
    throw new RangeError(`buffer ${buf.name}: range [${start}, ${start + length}) outside its ${buf.length} elements`);
  }
}
