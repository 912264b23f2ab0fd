// Elementwise work on images and sinograms in a workspace, split into one contiguous band of
// lines per worker (image rows or sinogram views). Each part declares what it writes, so pools
// with private memories stay consistent. Reductions write one f64 sum per line and the host adds
// the lines in order: totals are the same to the bit however the lines are split.
import type { Buf, Part, Workspace } from '../engine/workspace';
import { splitRange } from '../recon/split';

/** Byte address of element `i` of `buf` (for kernels that take a plain pointer). */
export function at(buf: Buf, i: number): number {
  return buf.ptr + i * 4;
}

/** Sum, in line order, of the f64 line sums held in `sums` (two f32 slots per line) for lines [a, b). */
export async function addLineSums(ws: Workspace, sums: Buf, a: number, b: number): Promise<number> {
  const raw = await ws.read(sums, 2 * a, 2 * (b - a));
  const values = new Float64Array(raw.buffer, raw.byteOffset, b - a);
  let total = 0;
  for (const v of values) total += v;
  return total;
}

/** The write declaration of lines [a, b) of a line-sum buffer. */
export function lineSumRange(sums: Buf, a: number, b: number): { buf: Buf; start: number; length: number } {
  return { buf: sums, start: 2 * a, length: 2 * (b - a) };
}

export class BandOps {
  /** [from, to) element bands, one per worker, aligned to whole lines of `lineLength`. */
  readonly bands: Array<[number, number]>;
  /** The same bands as line ranges. */
  readonly lines: Array<[number, number]>;
  /** One f64 per line, for reductions. */
  readonly sums: Buf;

  constructor(private readonly ws: Workspace, readonly lineLength: number, readonly lineCount: number) {
    this.lines = splitRange(lineCount, ws.parallelism);
    this.bands = this.lines.map(([a, b]) => [a * lineLength, b * lineLength]);
    this.sums = ws.alloc('lineSums', 2 * lineCount);
  }

  /** Runs one part per band; `make` builds the part for elements [from, to) / lines [a, b). */
  run(make: (from: number, to: number, a: number, b: number) => Part): Promise<number[]> {
    return this.ws.run(this.bands.map(([from, to], i) => make(from, to, this.lines[i][0], this.lines[i][1])));
  }

  /**
   * Runs parts that each write the f64 sums of their lines into `this.sums` (declared here) and
   * returns the total over all lines.
   */
  async total(make: (from: number, to: number, a: number, b: number) => Part): Promise<number> {
    await this.run((from, to, a, b) => {
      const p = make(from, to, a, b);
      return { ...p, writes: [...(p.writes ?? []), lineSumRange(this.sums, a, b)] };
    });
    return addLineSums(this.ws, this.sums, 0, this.lineCount);
  }

  /** dst = src. */
  copy(dst: Buf, src: Buf): Promise<number[]> {
    return this.run((from, to) => ({ kernel: 'copyRange', args: [dst, src, from, to], writes: [{ buf: dst, start: from, length: to - from }] }));
  }

  /** ||a - b|| (Euclidean). */
  async distance(a: Buf, b: Buf): Promise<number> {
    return Math.sqrt(await this.total((_f, _t, l0, l1) => ({ kernel: 'squaredDistances', args: [a, b, this.lineLength, l0, l1, this.sums] })));
  }

  /** ||a|| (Euclidean), summed on the host in element order. */
  async norm(a: Buf): Promise<number> {
    const v = await this.ws.read(a, 0, this.lineLength * this.lineCount);
    let s = 0;
    for (const x of v) s += x * x;
    return Math.sqrt(s);
  }

  /** dst *= factor, elementwise. */
  multiply(dst: Buf, factor: Buf): Promise<number[]> {
    return this.run((from, to) => ({
      kernel: 'multiplyArrays',
      args: [at(dst, from), at(dst, from), at(factor, from), to - from],
      writes: [{ buf: dst, start: from, length: to - from }],
    }));
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
