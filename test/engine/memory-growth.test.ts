// Growing the engine's memory: past the 4 GiB a 32-bit WebAssembly memory holds (WebAssembly Core
// Specification 1.0, 2.5.4: 65536 pages of 64 KiB) the job is refused before growing; a growth
// the runtime refuses below that (here a memory whose declared maximum is small, the same
// RangeError a browser short of address space throws) becomes a message that says what to do.
import { describe, expect, it } from 'vitest';
import { ensureMemory } from '../../web/core/engine/instance';

describe('engine memory growth', () => {
  it('grows to the bytes asked for, in whole 64 KiB pages', () => {
    const m = new WebAssembly.Memory({ initial: 1, maximum: 16 });
    ensureMemory(m, 3 * 65536 + 1);
    expect(m.buffer.byteLength).toBe(4 * 65536);
  });

  it('refuses past 4 GiB before trying, and explains a refused growth below it', () => {
    const m = new WebAssembly.Memory({ initial: 1, maximum: 4 });
    expect(() => ensureMemory(m, 2 ** 32 + 1)).toThrow(/more than the 4 GiB a WebAssembly memory can hold/);
    expect(() => ensureMemory(m, 10 * 65536)).toThrow(/needs 1 MiB of engine memory and the engine's memory could not grow from 0 MiB .*: bin the detector, take fewer views or a smaller grid/);
    expect(m.buffer.byteLength).toBe(65536);
  });
});
