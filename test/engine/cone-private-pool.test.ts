import { describe, expect, it } from 'vitest';
import { fdk3d } from '../../web/core/recon/fdk';
import { Projector3d } from '../../web/core/recon/projector3d';
import { seededRandom } from '../../web/core/simulate/noise';
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

async function run(ws: Workspace) {
  const f = await fdk3d(ws, { geometry: g, data: proj }, { grid, chunkBytes: 4 * 17 * 39 * 5 });
  ws.reset();
  const p = await Projector3d.create(ws, grid, g);
  const [vb, pb, ab, tb] = [ws.alloc('v', vol.length), ws.alloc('p', proj.length), ws.alloc('a', proj.length), ws.alloc('t', vol.length)];
  await ws.write(vb, vol);
  await ws.write(pb, proj);
  await p.forward(vb, ab);
  await p.adjoint(pb, tb);
  return { fdk: f.volume.data, forward: await ws.read(ab), adjoint: await ws.read(tb) };
}

describe('cone-beam kernels on workers with private memories', () => {
  it('FDK, forward and adjoint match the in-thread results', async () => {
    const ref = await run(await localWorkspace(1));
    const pool = await privatePool(3);
    try {
      const got = await run(pool);
      for (const k of ['fdk', 'forward', 'adjoint'] as const) {
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
