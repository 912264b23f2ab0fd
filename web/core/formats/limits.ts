// Limits every reader enforces before it allocates: a memory ceiling for decoded data and
// checks of announced sizes against the bytes present.
import { InputError } from '../errors';

/** Options shared by all readers. */
export interface ReadLimits {
  /**
   * Largest amount of memory (bytes) a reader may allocate for decoded samples and
   * intermediate buffers. Default 1 GiB.
   */
  maxBytes?: number;
}

/** Default memory ceiling of the readers: 1 GiB. */
export const DEFAULT_MAX_BYTES = 2 ** 30;

/** The memory ceiling in force. */
export function ceiling(limits?: ReadLimits): number {
  const m = limits?.maxBytes ?? DEFAULT_MAX_BYTES;
  if (!(m > 0) || !Number.isFinite(m)) throw new InputError(`memory ceiling: got ${m}, expected a positive number of bytes`);
  return m;
}

/**
 * Checks that `bytes` of new allocations fit under the ceiling; `what` names the data in the
 * message. Call before allocating.
 */
export function checkAllocation(bytes: number, limits: ReadLimits | undefined, what: string): void {
  const max = ceiling(limits);
  if (!Number.isFinite(bytes) || bytes > max) {
    throw new InputError(`${what}: ${formatBytes(bytes)} needed, more than the memory limit of ${formatBytes(max)}`);
  }
}

/** Product of whole positive sizes, rejecting non-integers and products past 2^53. */
export function sampleCount(sizes: readonly number[], what: string): number {
  let n = 1;
  for (const s of sizes) {
    if (!Number.isSafeInteger(s) || s < 1) throw new InputError(`${what}: got size ${s}, expected positive whole numbers`);
    n *= s;
    if (!Number.isSafeInteger(n)) throw new InputError(`${what}: sizes ${sizes.join(' x ')} are absurdly large`);
  }
  return n;
}

/** Checks that a file holds at least `need` bytes from `offset`. */
export function checkBytesPresent(have: number, offset: number, need: number, what: string): void {
  if (offset < 0 || offset + need > have) {
    throw new InputError(`${what}: the header promises ${need} bytes of data from byte ${offset}, the file holds ${Math.max(0, have - offset)}`);
  }
}

export function formatBytes(b: number): string {
  if (!Number.isFinite(b)) return String(b);
  if (b >= 2 ** 30) return `${(b / 2 ** 30).toFixed(1)} GiB`;
  if (b >= 2 ** 20) return `${(b / 2 ** 20).toFixed(1)} MiB`;
  return `${b} bytes`;
}
