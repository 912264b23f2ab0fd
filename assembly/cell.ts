// Cell index and fraction for linear interpolation on zero-padded lines, four lanes at a time,
// without float->int conversions in inner loops (the MAGIC trick, memory.ts).
//
// A padded coordinate t is clamped by the caller to [0, n + 1] (cell 0 and cells n+1, n+2 are
// zero padding, cells 1..n hold data). The pair read is (lo, lo + 1) with lo in [0, n + 1], so
// padded arrays need n + 3 cells. Rounding t + 1.5 instead of t - 0.5 keeps the value added to
// MAGIC positive (the trick needs that) and makes t = 0 round to lo = 0: 1.5 rounds half to
// even, up to 2. At other whole t the tie may give lo = t - 1 with fraction 1, which
// interpolates the same value.
import { MAGIC, MAGIC_BITS } from './memory';

/** t + 1.5 rounded to a whole number inside MAGIC's mantissa: pass to cellLo / cellFrac. */
@inline export function cellRound(t: v128): v128 {
  return f32x4.add(f32x4.add(t, f32x4.splat(1.5)), f32x4.splat(MAGIC));
}

/** Lower cell index (i32 lanes) of a rounded coordinate from cellRound. */
@inline export function cellLo(r: v128): v128 {
  return i32x4.sub(r, i32x4.splat(MAGIC_BITS + 2));
}

/** Interpolation fraction t - lo, in [0, 1] up to rounding. */
@inline export function cellFrac(t: v128, r: v128): v128 {
  return f32x4.sub(t, f32x4.sub(f32x4.sub(r, f32x4.splat(MAGIC)), f32x4.splat(2)));
}

/**
 * t clamped to [low, top]. Uses the pseudo-min/max (one machine instruction each; Wasm's
 * f32x4.min/max cost about six because of NaN and signed-zero rules), ordered so that a NaN
 * lane becomes `low` instead of reaching an address computation.
 */
@inline export function clampTo(t: v128, low: v128, top: v128): v128 {
  return f32x4.pmin(top, f32x4.pmax(low, t));
}

/** t clamped to [0, top] (see clampTo). */
@inline export function clampCoord(t: v128, top: v128): v128 {
  return clampTo(t, f32x4.splat(0), top);
}
