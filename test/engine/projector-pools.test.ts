// The projector gives the same projections and back-projections in one thread and on real
// worker pools, with shared memory (band-parallel padding and summing) and with private
// memories (the host sums the workers' shares). The reference is the single-part workspace.
import { afterAll, describe, expect, it } from 'vitest';
import type { Workspace } from '../../web/core/engine/workspace';
import { squareGrid } from '../../web/core/image';
import { Projector2d } from '../../web/core/recon/projector';
import { seededRandom } from '../../web/core/simulate/noise';
import { localWorkspace } from '../helpers/engine';
import { fanFlat } from '../helpers/geometries';
import { privatePool, sharedPool } from '../helpers/pools';

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
  return { fwd, adj, part: await ws.read(img) };
}

const pools: Workspace[] = [];
afterAll(() => pools.forEach((p) => p.dispose()));

describe('projector on worker pools', () => {
  it.each([
    ['shared memory, 2 workers', () => sharedPool(2)],
    ['private memories, 2 workers', () => privatePool(2)],
    ['local, 3 parts', () => localWorkspace(3)],
  ])('%s: same as one thread within float rounding', async (_, open) => {
    const ref = await project(await localWorkspace(1));
    const ws = await open();
    pools.push(ws);
    const got = await project(ws);
    for (const key of ['fwd', 'adj', 'part'] as const) {
      const a = ref[key], b = got[key];
      const scale = Math.max(...a.map(Math.abs));
      let worst = 0;
      for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]));
      expect(scale).toBeGreaterThan(0);
      expect(worst / scale).toBeLessThan(1e-5);
    }
  });
});
