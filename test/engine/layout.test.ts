// The engine's buffer layout: 16-byte aligned buffers, one after another, up to the 4 GiB that
// a 32-bit WebAssembly memory addresses (WebAssembly Core Specification 1.0, 2.5.4 memories:
// at most 65536 pages of 64 KiB). Addresses past 2^31 must stay positive and in order: a
// bitwise rounding (32-bit in JavaScript) once turned them negative, so runs whose buffers lay
// past 2 GiB failed ("memory access out of bounds" in the kernels).
import { describe, expect, it } from 'vitest';
import { Layout } from '../../web/core/engine/workspace';

describe('engine memory layout', () => {
  it('aligns every buffer to 16 bytes, in order, with 16 spare bytes after each', () => {
    const l = new Layout(1000);
    const a = l.alloc('a', 3);
    const b = l.alloc('b', 5);
    expect(a.ptr).toBe(1008);
    expect(b.ptr % 16).toBe(0);
    expect(b.ptr).toBeGreaterThanOrEqual(a.ptr + 3 * 4 + 16);
    expect(l.bytes).toBeGreaterThanOrEqual(b.ptr + 5 * 4 + 16);
  });

  it('lays out buffers past 2 GiB at positive, aligned addresses', () => {
    const l = new Layout(64);
    l.alloc('filler', 2 ** 29 + 5); // 2 GiB and 20 bytes
    const past = l.alloc('past', 1000);
    expect(past.ptr).toBeGreaterThan(2 ** 31);
    expect(past.ptr % 16).toBe(0);
    const next = l.alloc('next', 10);
    expect(next.ptr).toBeGreaterThanOrEqual(past.ptr + 4000 + 16);
    expect(l.bytes).toBeGreaterThan(next.ptr);
    expect(l.bytes).toBeLessThan(2 ** 32);
  });
});
