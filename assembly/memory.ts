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
 * 2^23 as f32. Adding it to a whole number in [0, 2^22) leaves that number in the low mantissa
 * bits, which avoids a float->int conversion in inner loops (measured here: V8 turns those into a
 * dependency chain). Apply it to floor(t) (floorOffsets), never to t - 0.5: below 2^23 the f32
 * spacing is 0.5, so t - 0.5 + 2^23 does not round to a whole number for t < 0.5.
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

/**
 * Byte offsets 4 * fl of four non-negative whole numbers fl (< 2^22) held as floats, without a
 * float->int conversion: fl + 2^23 is exact and its bits minus those of 2^23 are fl.
 */
@inline export function floorOffsets(fl: v128, magic: v128, magicBits: v128): v128 {
  return i32x4.shl(i32x4.sub(f32x4.add(fl, magic), magicBits), 2);
}
