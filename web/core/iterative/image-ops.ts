// Elementwise work on images and sinograms in a workspace, split into one contiguous band per
// worker (image rows or sinogram views). Each part declares what it writes, so pools with
// private memories stay consistent.
import type { Buf, Part, Workspace } from '../engine/workspace';
import { splitRange } from '../recon/split';

/** Byte address of element `i` of `buf` (for kernels that take a plain pointer). */
export function at(buf: Buf, i: number): number {
  return buf.ptr + i * 4;
}

export class BandOps {
  /** [from, to) element bands, one per worker, aligned to whole lines of `lineLength`. */
  readonly bands: Array<[number, number]>;
  /** The same bands as line ranges. */
  readonly lines: Array<[number, number]>;

  constructor(private readonly ws: Workspace, readonly lineLength: number, readonly lineCount: number) {
    this.lines = splitRange(lineCount, ws.parallelism);
    this.bands = this.lines.map(([a, b]) => [a * lineLength, b * lineLength]);
  }

  /** Runs one part per band; `make` builds the part for elements [from, to) / lines [a, b). */
  run(make: (from: number, to: number, a: number, b: number) => Part): Promise<number[]> {
    return this.ws.run(this.bands.map(([from, to], i) => make(from, to, this.lines[i][0], this.lines[i][1])));
  }

  /** Sum of the parts' return values. */
  async sum(make: (from: number, to: number, a: number, b: number) => Part): Promise<number> {
    return (await this.run(make)).reduce((s, v) => s + v, 0);
  }

  /** dst = src. */
  copy(dst: Buf, src: Buf): Promise<number[]> {
    return this.run((from, to) => ({ kernel: 'copyRange', args: [dst, src, from, to], writes: [{ buf: dst, start: from, length: to - from }] }));
  }

  /** ||a - b|| (Euclidean, f64 sums). */
  async distance(a: Buf, b: Buf): Promise<number> {
    return Math.sqrt(await this.sum((from, to) => ({ kernel: 'squaredDistance', args: [a, b, from, to] })));
  }

  /** ||a|| (Euclidean, f64 sums). */
  async norm(a: Buf): Promise<number> {
    return Math.sqrt(await this.sum((from, to) => ({ kernel: 'dotArrays', args: [at(a, from), at(a, from), to - from] })));
  }

  /** dst += s * src. */
  addScaled(dst: Buf, src: Buf, s: number): Promise<number[]> {
    return this.run((from, to) => ({
      kernel: 'addScaled',
      args: [at(dst, from), at(src, from), to - from, s],
      writes: [{ buf: dst, start: from, length: to - from }],
    }));
  }
}
