// The chord-block kernels (assembly/chord-blocks.ts) against plain dense arithmetic: blocks built
// as G^T G plus a band, factored (Cholesky, Golub & Van Loan 4.2), multiplied (L L^T x) and
// solved; the same on one and on two workers.
import { describe, expect, it } from 'vitest';
import { ChordBlocks } from '../../web/core/dbp/chord-blocks';
import { localWorkspace } from '../helpers/engine';

/** Deterministic pseudo-random numbers in [-1, 1) (a linear congruential generator, common practice). */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 31 - 1;
  };
}

const sizes = [7, 12, 3, 20, 9];

function blocks() {
  const rnd = lcg(7);
  const rows = sizes.map((n) => ({ count: n + 4, rows: Float64Array.from({ length: (n + 4) * n }, rnd), targets: new Float64Array(n + 4) }));
  const total = sizes.reduce((s, n) => s + n, 0);
  const diag = Float64Array.from({ length: total }, () => 0.5 + Math.abs(rnd()));
  const sub = Float64Array.from({ length: total }, () => 0.1 * rnd());
  let o = 0;
  for (const n of sizes) { sub[o + n - 1] = 0; o += n; }
  const x = Float64Array.from({ length: total }, rnd);
  return { rows, diag, sub, x, total };
}

/** (G^T G + band) x, block by block, in plain arithmetic. */
function expected(b: ReturnType<typeof blocks>): Float64Array {
  const y = new Float64Array(b.total);
  let o = 0;
  sizes.forEach((n, m) => {
    const { rows, count } = b.rows[m];
    for (let r = 0; r < count; r++) {
      let gx = 0;
      for (let j = 0; j < n; j++) gx += rows[r * n + j] * b.x[o + j];
      for (let i = 0; i < n; i++) y[o + i] += rows[r * n + i] * gx;
    }
    for (let i = 0; i < n; i++) {
      y[o + i] += b.diag[o + i] * b.x[o + i];
      if (i + 1 < n) { y[o + i] += b.sub[o + i] * b.x[o + i + 1]; y[o + i + 1] += b.sub[o + i] * b.x[o + i]; }
    }
    o += n;
  });
  return y;
}

describe('chord blocks in the engine', () => {
  it.each([1, 2])('build, factor, multiply and solve on %i worker(s)', async (workers) => {
    const b = blocks();
    const ws = await localWorkspace(workers);
    const cb = new ChordBlocks(ws, sizes, 24);
    expect(cb.total).toBe(b.total);
    await cb.build((m) => b.rows[m]);
    await cb.addBandAndFactor(b.diag, b.sub);
    const y = await cb.multiply(b.x);
    const want = expected(b);
    const norm = Math.sqrt(want.reduce((s, v) => s + v * v, 0));
    for (let i = 0; i < b.total; i++) expect(Math.abs(y[i] - want[i])).toBeLessThan(1e-12 * norm);
    const back = await cb.solve(y);
    for (let i = 0; i < b.total; i++) expect(Math.abs(back[i] - b.x[i])).toBeLessThan(1e-9);
  });
});
