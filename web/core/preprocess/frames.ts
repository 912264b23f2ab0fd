// Dark and flat (open-beam) reference frames: a single frame, an averaged stack, or a constant.
import { InputError } from '../errors';

/** A reference level per detector element (one frame, rows x channels) or one number for all. */
export type ReferenceFrame = Float32Array | number;

/**
 * Averages a stack of frames (frame after frame, each `frameSize` values) into one frame.
 * A single frame is returned as it is.
 */
export function averageFrames(stack: Float32Array, frameSize: number, what: string): Float32Array {
  if (frameSize < 1 || stack.length % frameSize !== 0 || stack.length === 0) {
    throw new InputError(`${what}: ${stack.length} values are not a whole number of ${frameSize}-element detector frames`);
  }
  const n = stack.length / frameSize;
  if (n === 1) return stack;
  const sum = new Float64Array(frameSize);
  for (let f = 0; f < n; f++) {
    const o = f * frameSize;
    for (let i = 0; i < frameSize; i++) sum[i] += stack[o + i];
  }
  const out = new Float32Array(frameSize);
  for (let i = 0; i < frameSize; i++) out[i] = sum[i] / n;
  return out;
}

/** The value of a reference at element i. */
export function at(ref: ReferenceFrame | undefined, i: number, fallback: number): number {
  if (ref === undefined) return fallback;
  return typeof ref === 'number' ? ref : ref[i];
}

/** Checks a reference has one value per detector element. */
export function checkFrame(ref: ReferenceFrame | undefined, frameSize: number, what: string): void {
  if (ref === undefined) return;
  if (typeof ref === 'number') {
    if (!Number.isFinite(ref)) throw new InputError(`${what}: got ${ref}, expected a finite level`);
    return;
  }
  if (ref.length !== frameSize) throw new InputError(`${what}: got ${ref.length} values, expected one frame of ${frameSize} (rows x channels)`);
}
