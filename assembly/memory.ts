// Small addressing helpers over flat f32 / i32 arrays in linear memory.

/** f32 at element index i of the array starting at byte address p. */
@inline export function ldf(p: usize, i: i32): f32 {
  return load<f32>(p + (<usize>i << 2));
}

/** Store f32 v at element index i of the array starting at byte address p. */
@inline export function stf(p: usize, i: i32, v: f32): void {
  store<f32>(p + (<usize>i << 2), v);
}

/** i32 at element index i of the array starting at byte address p. */
@inline export function ldi(p: usize, i: i32): i32 {
  return load<i32>(p + (<usize>i << 2));
}

/** Store i32 v at element index i of the array starting at byte address p. */
@inline export function sti(p: usize, i: i32, v: i32): void {
  store<i32>(p + (<usize>i << 2), v);
}

/** Byte address of element i of an f32 array at p. */
@inline export function addr(p: usize, i: i32): usize {
  return p + (<usize>i << 2);
}

/**
 * 2^23 as f32. Adding it to a float in [0, 2^22) leaves the rounded integer in the low mantissa
 * bits, which avoids a float->int conversion in inner loops (toolchain.md: V8 turns those into a
 * dependency chain). Subtract 0.5 first to get floor instead of round; at exact integers this may
 * return x-1 with fraction 1, which still interpolates correctly.
 */
export const MAGIC: f32 = 8388608.0;
export const MAGIC_BITS: i32 = 0x4b000000;

/**
 * Clamps four lanes to [lo, hi] with the pseudo-min/max instructions (one machine instruction
 * each; f32x4.min/max must propagate NaN and order -0 < +0, which costs about seven). A NaN
 * lane becomes lo, so an index computed from it stays inside the array.
 */
@inline export function clampIndex(x: v128, lo: v128, hi: v128): v128 {
  return f32x4.pmin(hi, f32x4.pmax(lo, x));
}
