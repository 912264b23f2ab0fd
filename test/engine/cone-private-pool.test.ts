import { describe, expect, it } from 'vitest';
import { fdk3d } from '../../web/core/recon/fdk';
import { Projector3d } from '../../web/core/recon/projector3d';
import { seededRandom } from '../../web/core/simulate/noise';
import { planConeExtension, type ConeExtensionPlan } from '../../web/core/truncation/cone-extension';
import { coneRowExtension } from '../../web/core/truncation/row-extension';
import type { Workspace } from '../../web/core/engine/workspace';
import type { VolumeGrid } from '../../web/core/volume';
import { localWorkspace } from '../helpers/engine';
import { cone } from '../helpers/cone';
import { privatePool } from '../helpers/private-pool';

// Workers with private memories only see what other parts declare they write: the results must
// equal those of one in-thread workspace (same kernels, same arithmetic).
const g = cone({ channels: 36, rows: 14, pitch: 2, views: 16, R: 250, D: 450 });
const grid: VolumeGrid = { nx: 26, ny: 22, nz: 11, dx: 2, dy: 2, dz: 2, cx: 0, cy: 1, cz: -1 };
const rand = seededRandom(21);
const proj = Float32Array.from({ length: 16 * 14 * 36 }, () => rand());
const vol = Float32Array.from({ length: 26 * 22 * 11 }, () => rand());

/** `views` views per FDK chunk (the row extension reads each chunk's parameters at an offset). */
async function run(ws: Workspace, views: number, plan: ConeExtensionPlan) {
  const f = await fdk3d(ws, { geometry: g, data: proj }, { grid, chunkBytes: 4 * 17 * 39 * views });
  const wide = 36 + plan.left + plan.right + 3;
  const e = await fdk3d(ws, { geometry: g, data: proj.map((x) => 1 + x) }, { grid, chunkBytes: 4 * 17 * wide * views, extension: coneRowExtension(plan, 36) });
  ws.reset();
  const p = await Projector3d.create(ws, grid, g);
  const [vb, pb, ab, tb, bb] = [ws.alloc('v', vol.length), ws.alloc('p', proj.length), ws.alloc('a', proj.length), ws.alloc('t', vol.length), ws.alloc('b', vol.length)];
  await ws.write(vb, vol);
  await ws.write(pb, proj);
  await p.forward(vb, ab);
  await p.adjoint(pb, tb);
  await p.backprojectVoxels(pb, bb);
  return { fdk: f.volume.data, extended: e.volume.data, forward: await ws.read(ab), adjoint: await ws.read(tb), voxelDriven: await ws.read(bb) };
}

describe('cone-beam kernels on workers with private memories', () => {
  it('FDK (also with row extension, in chunks of views), forward, adjoint and the voxel-driven backprojector match the in-thread results', async () => {
    // Every row cut off at both edges (values well above the air threshold): mirror tails everywhere.
    const plan = await planConeExtension({ geometry: g, data: proj.map((x) => 1 + x) }, 'mirror');
    expect(plan.left).toBeGreaterThan(3);
    expect(plan.right).toBeGreaterThan(3);
    const ref = await run(await localWorkspace(1), 16, plan);
    const pool = await privatePool(3);
    try {
      const got = await run(pool, 5, plan);
      for (const k of ['fdk', 'extended', 'forward', 'adjoint', 'voxelDriven'] as const) {
        let worst = 0, scale = 0;
        for (let i = 0; i < ref[k].length; i++) {
          worst = Math.max(worst, Math.abs(ref[k][i] - got[k][i]));
          scale = Math.max(scale, Math.abs(ref[k][i]));
        }
        expect(scale, k).toBeGreaterThan(0);
        expect(worst / scale, k).toBeLessThan(1e-5);
      }
    } finally {
      pool.dispose();
    }
  });
});
