// The workspace: the one way recipes reach the engine. A recipe lays out named buffers, writes
// inputs, runs kernels (one part per worker, in parallel) and reads results. The same recipe
// code runs in one thread (LocalWorkspace), on workers sharing one memory, or on workers with
// private memories (the pool copies the ranges each part declares it writes).
import type { KernelName } from './abi';

/** A region of engine memory: byte address and length in 4-byte elements. */
export interface Buf {
  readonly name: string;
  readonly ptr: number;
  readonly length: number;
}

/** A range of a buffer, in elements. */
export interface BufRange {
  buf: Buf;
  start: number;
  length: number;
}

/** Kernel arguments: numbers pass as they are, buffers as their byte address. */
export type Arg = number | Buf;

/** One kernel call, and the ranges it writes that later calls on other workers will read. */
export interface Part {
  kernel: KernelName;
  args: Arg[];
  writes?: Array<Buf | BufRange>;
}

export interface Workspace {
  /** How many parts `run` executes at once (number of workers). */
  readonly parallelism: number;
  /**
   * True when all parts read and write one memory, so a part's writes are visible to the others
   * without copying (then band-parallel variants of a step may be used). Absent: false.
   */
  readonly sharedMemory?: boolean;
  /** Reserves `length` elements (4 bytes each), 16-byte aligned. Layout only; contents undefined. */
  alloc(name: string, length: number): Buf;
  /** One buffer per worker (scratch that parts must not share). */
  allocPerWorker(name: string, length: number): Buf[];
  /** Forgets every allocation (the next job lays out afresh). */
  reset(): void;
  /** Copies data into a buffer (every worker sees it). */
  write(buf: Buf, data: Float32Array | Int32Array, start?: number): Promise<void>;
  /** Copies a buffer range out. Per-worker buffers are read from their worker. */
  read(buf: Buf, start?: number, length?: number, worker?: number): Promise<Float32Array>;
  /** Runs parts[i] on worker i, all at once; resolves with each call's return value. */
  run(parts: Part[]): Promise<number[]>;
  /** Stops the workers. */
  dispose(): void;
}

/** Bump allocator over engine memory, 16-byte aligned. */
export class Layout {
  private top: number;
  constructor(private readonly base: number) {
    this.top = align16(base);
  }
  alloc(name: string, length: number): Buf {
    if (!Number.isInteger(length) || length < 0) throw new RangeError(`buffer ${name}: bad length ${length}`);
    const buf = { name, ptr: this.top, length };
    this.top = align16(this.top + length * 4 + 16); // 16 spare bytes: SIMD tails may read past the end
    return buf;
  }
  reset(): void {
    this.top = align16(this.base);
  }
  /** Bytes of memory the current layout needs. */
  get bytes(): number {
    return this.top;
  }
}

/** n rounded up to a multiple of 16 (arithmetic, not bitwise: addresses reach past 2^31). */
function align16(n: number): number {
  return Math.ceil(n / 16) * 16;
}

/** Normalizes a write declaration to a range. */
export function asRange(w: Buf | BufRange): BufRange {
  return 'buf' in w ? w : { buf: w, start: 0, length: w.length };
}

/** Resolves kernel arguments to numbers. */
export function resolveArgs(args: Arg[]): number[] {
  return args.map((a) => (typeof a === 'number' ? a : a.ptr));
}
