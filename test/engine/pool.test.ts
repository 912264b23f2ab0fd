// Worker pools must give the same numbers as one thread: the work split and the copying of
// private memories may not change results (beyond float rounding).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { squareGrid } from '../../web/core/image';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { fbp2d } from '../../web/core/recon/fbp';
import { Projector2d } from '../../web/core/recon/projector';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import type { Workspace } from '../../web/core/engine/workspace';
import { createNodePool } from '../../web/worker/node-pool';
import { engineModule, localWorkspace } from '../helpers/engine';
import { fanFlat } from '../helpers/geometries';

const workerUrl = new URL('../../build/kernel-worker.mjs', import.meta.url);
const sharedModule = () => new WebAssembly.Module(readFileSync(new URL('../../build/engine-shared.wasm', import.meta.url)));

async function fbpAndProjection(ws: Workspace) {
  const g = fanFlat(192, 1.5, 120);
  const scan = { geometry: g, data: analyticSinogram(sheppLogan(), g) };
  const grid = squareGrid(96, 2);
  const { image } = await fbp2d(ws, scan, { grid });
  const proj = await Projector2d.create(ws, grid, g);
  const x = ws.alloc('x', image.data.length), y = ws.alloc('y', proj.nViews * proj.nCh), z = ws.alloc('z', image.data.length);
  await ws.write(x, image.data);
  await proj.forward(x, y);
  await proj.adjoint(y, z);
  return { image: image.data, sino: await ws.read(y), back: await ws.read(z) };
}

function maxRelDiff(a: Float32Array, b: Float32Array): number {
  let m = 0, scale = 0;
  for (let i = 0; i < a.length; i++) {
    m = Math.max(m, Math.abs(a[i] - b[i]));
    scale = Math.max(scale, Math.abs(a[i]));
  }
  return m / scale;
}

describe('worker pools', () => {
  it.each([
    ['two workers, shared memory', true],
    ['two workers, private memories', false],
  ])('%s: same FBP, projection and adjoint as one thread', async (_, shared) => {
    const ref = await fbpAndProjection(await localWorkspace(1));
    const pool = await createNodePool(shared ? sharedModule() : engineModule(), workerUrl, 2, shared);
    try {
      const got = await fbpAndProjection(pool);
      expect(maxRelDiff(ref.image, got.image)).toBeLessThan(1e-6);
      expect(maxRelDiff(ref.sino, got.sino)).toBeLessThan(1e-6);
      expect(maxRelDiff(ref.back, got.back)).toBeLessThan(1e-5);
    } finally {
      pool.dispose();
    }
  });

  it('a failing kernel call rejects with the engine message instead of hanging', async () => {
    const pool = await createNodePool(sharedModule(), workerUrl, 2, true);
    try {
      const b = pool.alloc('b', 4);
      // A pointer far beyond memory makes the kernel trap (out of bounds).
      await expect(pool.run([{ kernel: 'scaleArray', args: [{ ...b, ptr: 2 ** 31 }, 4, 2] }])).rejects.toThrow(/out of bounds/);
    } finally {
      pool.dispose();
    }
  });
});
