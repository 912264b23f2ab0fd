// The projector gives the same projections and back-projections, to the bit, in one thread and
// on real worker pools with shared memory (band-parallel padding and summing) or private
// memories (the host sums the chunks): the adjoint sums a fixed number of view chunks in a
// fixed order (recon/adjoint-chunks.ts). The reference is the single-part workspace.
import { afterAll, describe, expect, it } from 'vitest';
import { planAdjointChunks } from '../../web/core/recon/adjoint-chunks';
import type { Workspace } from '../../web/core/engine/workspace';
import { squareGrid } from '../../web/core/image';
import { Projector2d } from '../../web/core/recon/projector';
import { seededRandom } from '../../web/core/simulate/noise';
import { localWorkspace } from '../helpers/engine';
import { fanFlat } from '../helpers/geometries';
import { openWorkspace } from '../../web/cli/engine-node';
import { privatePool } from '../helpers/private-pool';

const grid = { ...squareGrid(61, 2.1), cx: 3, cy: -2 };
const geometry = fanFlat(97, 1.5, 24);
const rand = seededRandom(21);
const image = Float32Array.from({ length: grid.nx * grid.ny }, () => rand());
const sino = Float32Array.from({ length: 24 * 97 }, () => rand());

async function project(ws: Workspace): Promise<{ fwd: Float32Array; adj: Float32Array; part: Float32Array }> {
  const p = await Projector2d.create(ws, grid, geometry);
  const img = ws.alloc('img', image.length);
  const s = ws.alloc('sino', sino.length);
  await ws.write(img, image);
  await p.forward(img, s);
  const fwd = await ws.read(s);
  await ws.write(s, sino);
  await p.adjoint(s, img);
  const adj = await ws.read(img);
  await p.adjoint(s, img, 5, 8); // a sub-range of views
  const part = await ws.read(img);
  // The accumulators are cleared after each use: repeating a call repeats its result.
  await p.adjoint(s, img);
  expect(Array.from(await ws.read(img))).toEqual(Array.from(adj));
  return { fwd, adj, part };
}

const pools: Workspace[] = [];
afterAll(() => pools.forEach((p) => { p.dispose(); }));

describe('projector on worker pools', () => {
  it.each([
    ['shared memory, 2 workers', () => openWorkspace(2)],
    ['private memories, 2 workers', () => privatePool(2)],
    ['local, 3 parts', () => localWorkspace(3)],
  ])('%s: same bits as one thread', async (_, open) => {
    const ref = await project(await localWorkspace(1));
    const ws = await open();
    pools.push(ws);
    const got = await project(ws);
    for (const key of ['fwd', 'adj', 'part'] as const) {
      expect(Math.max(...ref[key])).toBeGreaterThan(0);
      expect(Array.from(got[key])).toEqual(Array.from(ref[key]));
    }
  });
});

describe('adjoint chunk plan', () => {
  it('deals chunks to workers in contiguous blocks, one run per chunk depth', () => {
    expect(planAdjointChunks(18, 4, 2)).toEqual({
      views: [[0, 5], [5, 9], [9, 14], [14, 18]],
      owner: [0, 0, 1, 1],
      owned: [[0, 2], [2, 4]],
      batches: [[0, 2], [1, 3]],
    });
    const three = planAdjointChunks(40, 4, 3);
    expect(three.owner).toEqual([0, 1, 1, 2]);
    expect(three.batches).toEqual([[0, 1, 3], [-1, 2, -1]]);
    // Fewer views than chunks: one chunk per view.
    expect(planAdjointChunks(2, 4, 2).views).toEqual([[0, 1], [1, 2]]);
  });
});

describe('reading from a shared-memory pool', () => {
  it('returns an ordinary (not shared) array, which storage and transfer accept', async () => {
    const ws = await openWorkspace(2);
    pools.push(ws);
    const b = ws.alloc('b', 5);
    await ws.write(b, Float32Array.from([1, 2, 3, 4, 5]));
    const got = await ws.read(b, 1, 3);
    expect(Array.from(got)).toEqual([2, 3, 4]);
    expect(got.buffer instanceof SharedArrayBuffer).toBe(false);
    expect(structuredClone(got)).toEqual(got);
  });
});
