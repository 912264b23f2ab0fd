// The chords' dense blocks in engine memory (assembly/chord-blocks.ts): each worker owns a fixed
// range of chords, builds their blocks from Gram rows, factors them, and applies them (L L^T x)
// and their inverses. Blocks never leave their worker; vectors travel as f64 bytes.
import type { Buf, Workspace } from '../engine/workspace';
import type { ChordRows } from './chord-solve';

/** i32 per block in the kernels' table (assembly/chord-blocks.ts CHORD_TABLE_STRIDE). */
const TABLE_STRIDE = 5;
/** Gram rows sent to the engine at once, in f64 (32 MB). */
const ROWS_BATCH = 4 << 20;
/** Pivot floor of the factorization, relative to a block's mean diagonal. */
const PIVOT_FLOOR = 1e-12;

const asF32 = (a: Float64Array) => new Float32Array(a.buffer, a.byteOffset, a.length * 2);
const asF64 = (a: Float32Array) => new Float64Array(a.buffer, a.byteOffset, a.length / 2);

export class ChordBlocks {
  /** Offset of each block's vector part, f64 elements; total unknowns. */
  readonly offsets: Int32Array;
  readonly total: number;
  private readonly table: Int32Array;
  private readonly tableBuf: Buf;
  private readonly mats: Buf;
  private readonly vecIn: Buf;
  private readonly vecOut: Buf;
  private readonly diag: Buf;
  private readonly sub: Buf;
  private readonly rows: Buf;
  private readonly scratch: Buf[];
  /** Blocks each worker owns. */
  private readonly owners: Array<[number, number]>;

  /** Lays out blocks of the given sizes (the workspace is reset). */
  constructor(private readonly ws: Workspace, readonly sizes: number[], maxRows: number) {
    const nb = sizes.length;
    this.offsets = new Int32Array(nb);
    this.table = new Int32Array(nb * TABLE_STRIDE);
    let vec = 0, packed = 0;
    sizes.forEach((n, b) => {
      this.offsets[b] = vec;
      this.table.set([packed, vec, n, 0, 0], b * TABLE_STRIDE);
      vec += n;
      packed += (n * (n + 1)) / 2;
    });
    this.total = vec;
    // Owners by equal shares of work (n^2 per block).
    const cost = sizes.map((n) => n * n);
    const all = cost.reduce((s, c) => s + c, 0);
    this.owners = [];
    let start = 0, acc = 0;
    for (let w = 0; w < ws.parallelism && start < nb; w++) {
      let end = start;
      const target = (all * (w + 1)) / ws.parallelism;
      while (end < nb && (acc + cost[end] <= target || end === start || w === ws.parallelism - 1)) acc += cost[end++];
      this.owners.push([start, end]);
      start = end;
    }
    ws.reset();
    const maxN = Math.max(...sizes);
    this.tableBuf = ws.alloc('chordTable', this.table.length);
    this.mats = ws.alloc('chordBlocks', 2 * packed);
    this.vecIn = ws.alloc('chordVecIn', 2 * vec);
    this.vecOut = ws.alloc('chordVecOut', 2 * vec);
    this.diag = ws.alloc('chordDiag', 2 * vec);
    this.sub = ws.alloc('chordSub', 2 * vec);
    this.rows = ws.alloc('chordRows', 2 * Math.max(ROWS_BATCH, maxRows * maxN));
    this.scratch = ws.allocPerWorker('chordScratch', 2 * maxN);
  }

  /** Parts over the owners' blocks within [b0, b1). */
  private parts(b0: number, b1: number, part: (a: number, b: number, worker: number) => { kernel: 'chordGram' | 'chordBand' | 'chordFactor' | 'chordSolve' | 'chordMultiply'; args: (number | Buf)[]; vecOut?: boolean }) {
    return this.owners.map(([a, b], w) => {
      const lo = Math.max(a, b0), hi = Math.min(b, b1);
      const p = part(lo, Math.max(lo, hi), w);
      const writes = p.vecOut && hi > lo ? [{ buf: this.vecOut, start: 2 * this.offsets[lo], length: 2 * (this.offsets[hi - 1] + this.sizes[hi - 1] - this.offsets[lo]) }] : [];
      return { kernel: p.kernel, args: p.args, writes };
    });
  }

  /** Builds every block as G^T G from its rows; `rowsOf(b)` gives block b's rows (called once per block, in order). */
  async build(rowsOf: (b: number) => ChordRows, onBatch?: (done: number) => void): Promise<void> {
    const nb = this.sizes.length;
    let next: ChordRows | undefined = nb ? rowsOf(0) : undefined;
    let b = 0;
    while (b < nb) {
      const b0 = b;
      const batch: Float64Array[] = [];
      let used = 0;
      while (next && (b === b0 || used + next.count * this.sizes[b] <= ROWS_BATCH)) {
        const len = next.count * this.sizes[b];
        this.table[b * TABLE_STRIDE + 3] = used;
        this.table[b * TABLE_STRIDE + 4] = next.count;
        batch.push(next.rows.subarray(0, len));
        used += len;
        b++;
        next = b < nb ? rowsOf(b) : undefined;
      }
      const flat = new Float64Array(used);
      let o = 0;
      for (const part of batch) { flat.set(part, o); o += part.length; }
      await this.ws.write(this.tableBuf, this.table);
      await this.ws.write(this.rows, asF32(flat));
      await this.ws.run(this.parts(b0, b, (lo, hi) => ({ kernel: 'chordGram', args: [this.tableBuf, lo, hi, this.rows, this.mats] })));
      onBatch?.(b);
    }
  }

  /** Adds a band (diag[j] at (j, j), sub[j] at (j+1, j), per block at its offset) and factors every block. */
  async addBandAndFactor(diag: Float64Array, sub: Float64Array): Promise<void> {
    await this.ws.write(this.diag, asF32(diag));
    await this.ws.write(this.sub, asF32(sub));
    const nb = this.sizes.length;
    await this.ws.run(this.parts(0, nb, (lo, hi) => ({ kernel: 'chordBand', args: [this.tableBuf, lo, hi, this.diag, this.sub, this.mats] })));
    await this.ws.run(this.parts(0, nb, (lo, hi) => ({ kernel: 'chordFactor', args: [this.tableBuf, lo, hi, this.mats, PIVOT_FLOOR] })));
  }

  /** y = L L^T x, block by block (the factored blocks themselves). */
  async multiply(x: Float64Array): Promise<Float64Array> {
    await this.ws.write(this.vecIn, asF32(x));
    await this.ws.run(this.parts(0, this.sizes.length, (lo, hi, w) => ({ kernel: 'chordMultiply', args: [this.tableBuf, lo, hi, this.mats, this.vecIn, this.vecOut, this.scratch[w]], vecOut: true })));
    return asF64(await this.ws.read(this.vecOut, 0, 2 * this.total)).slice();
  }

  /** z = (L L^T)^-1 r, block by block. */
  async solve(r: Float64Array): Promise<Float64Array> {
    await this.ws.write(this.vecIn, asF32(r));
    await this.ws.run(this.parts(0, this.sizes.length, (lo, hi) => ({ kernel: 'chordSolve', args: [this.tableBuf, lo, hi, this.mats, this.vecIn, this.vecOut], vecOut: true })));
    return asF64(await this.ws.read(this.vecOut, 0, 2 * this.total)).slice();
  }
}
