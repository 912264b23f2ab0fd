// The platform web/core may use: what browsers (page and workers) and Node >= 20 all provide,
// declared by hand so that core is type-checked without the DOM library (tsconfig.core.json):
// code in core that reaches for document, window, Worker, IndexedDB or a Node module fails to
// type-check. Only the members core uses are declared; add one here only when every platform
// Rimfill runs on has it. The main tsconfig excludes this file (lib.dom declares the full APIs).

declare const performance: { now(): number };
declare function setTimeout(handler: (...args: never[]) => void, ms?: number): unknown;
declare function structuredClone<T>(value: T): T;
declare function atob(data: string): string;
declare const crypto: { getRandomValues<T extends ArrayBufferView>(array: T): T };

declare class TextDecoder {
  constructor(label?: string, options?: { fatal?: boolean; ignoreBOM?: boolean });
  decode(input?: ArrayBufferView | ArrayBuffer): string;
}
declare class TextEncoder {
  encode(input?: string): Uint8Array;
}

interface AbortSignal {
  readonly aborted: boolean;
  readonly reason: unknown;
  addEventListener(type: 'abort', listener: () => void, options?: { once?: boolean }): void;
  removeEventListener(type: 'abort', listener: () => void): void;
}

type ReadableStreamReadResult<R> = { done: true; value?: undefined } | { done: false; value: R };
interface ReadableStream<R> {
  pipeThrough<T>(transform: { readable: ReadableStream<T>; writable: unknown }): ReadableStream<T>;
  getReader(): { read(): Promise<ReadableStreamReadResult<R>>; cancel(reason?: unknown): Promise<void> };
}
type BlobPart = ArrayBufferView | ArrayBuffer | string;
declare class Blob {
  constructor(parts: BlobPart[]);
  stream(): ReadableStream<Uint8Array>;
}
declare class CompressionStream {
  constructor(format: 'gzip' | 'deflate');
  readonly readable: ReadableStream<Uint8Array>;
  readonly writable: unknown;
}
declare class DecompressionStream {
  constructor(format: 'gzip' | 'deflate');
  readonly readable: ReadableStream<Uint8Array>;
  readonly writable: unknown;
}

declare namespace WebAssembly {
  class Module {
    private readonly brand: 'WebAssembly.Module';
  }
  class Memory {
    constructor(descriptor: { initial: number; maximum?: number; shared?: boolean });
    readonly buffer: ArrayBuffer | SharedArrayBuffer;
    grow(delta: number): number;
  }
  interface Instance {
    readonly exports: Record<string, unknown>;
  }
  function compile(bytes: ArrayBufferView | ArrayBuffer): Promise<Module>;
  function instantiate(module: Module, imports?: Record<string, Record<string, unknown>>): Promise<Instance>;
}
