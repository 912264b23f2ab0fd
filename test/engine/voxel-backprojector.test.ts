// The voxel-driven backprojector that OS-SART on volumes uses for its update (Projector3d
// backprojectVoxels; REFERENCES.md [mueller-1999], [zeng-gullberg-2000]): it is not the exact
// transpose of the 3D Joseph projector, but it must match the ray geometry's column sums and be
// close to the transpose on smooth volumes.
import { describe, expect, it } from 'vitest';
import { Projector3d } from '../../web/core/recon/projector3d';
import { voxelize, type SolidPhantom } from '../../web/core/phantoms/solid';
import type { VolumeGrid } from '../../web/core/volume';
import { localWorkspace } from '../helpers/engine';
import { cone } from '../helpers/cone';

// 31^3 voxels of 2 mm (voxel 15 at the isocentre); 90 views of a 72 x 56 panel of 2 mm
// (R 300, D 540: the grid lies well inside every view's cone).
const R = 300, D = 540, pitch = 2, views = 90;
const g = cone({ channels: 72, rows: 56, pitch, views, R, D });
const grid: VolumeGrid = { nx: 31, ny: 31, nz: 31, dx: 2, dy: 2, dz: 2, cx: 0, cy: 0, cz: 0 };
const centre = (15 * 31 + 15) * 31 + 15;

function ball(cx: number, cy: number, cz: number, r: number): SolidPhantom {
  return { name: 'ball', muWater: 0.02, radius: 40, halfHeight: 40, solids: [{ shape: 'ellipsoid', cx, cy, cz, a: r, b: r, c: r, phiDeg: 0, value: 1 }] };
}

async function operators() {
  const ws = await localWorkspace(2);
  const p = await Projector3d.create(ws, grid, g);
  const n = 31 ** 3;
  const [vol, proj, out] = [ws.alloc('vol', n), ws.alloc('proj', p.projectionLength), ws.alloc('out', n)];
  return {
    forward: async (x: Float32Array) => { await ws.write(vol, x); await p.forward(vol, proj); return ws.read(proj); },
    adjoint: async (y: Float32Array) => { await ws.write(proj, y); await p.adjoint(proj, out); return ws.read(out); },
    voxels: async (y: Float32Array) => { await ws.write(proj, y); await p.backprojectVoxels(proj, out); return ws.read(out); },
    length: p.projectionLength,
  };
}

const dot = (a: Float32Array, b: Float32Array) => a.reduce((s, v, i) => s + v * b[i], 0);

describe('voxel-driven cone-beam backprojector', () => {
  it('column sums at the isocentre: views x (D/R)^2 dx dy dz / (pu pv), as the ray density gives; the exact adjoint sums agree about the isocentre', async () => {
    const op = await operators();
    const ones = new Float32Array(op.length).fill(1);
    // REFERENCES.md [cone-ray-density]: at the isocentre l = R in every view.
    const expected = views * (D / R) ** 2 * (2 * 2 * 2) / (pitch * pitch);
    const b = await op.voxels(ones);
    expect(b[centre] / expected).toBeCloseTo(1, 4);
    // The Joseph projector's own column sums (the exact adjoint of ones) meet the same density
    // on average: over the 5 x 5 x 5 voxels about the isocentre (where a single voxel sees the
    // 1.1 mm ray spacing alias: the central column reads 6% low, its neighbours 1% low).
    const a = await op.adjoint(ones);
    let sa = 0, sb = 0;
    for (let k = 13; k <= 17; k++) for (let j = 13; j <= 17; j++) for (let i = 13; i <= 17; i++) {
      sa += a[(k * 31 + j) * 31 + i];
      sb += b[(k * 31 + j) * 31 + i];
    }
    expect(Math.abs(sa / sb - 1)).toBeLessThan(0.03);
  });

  it('is close to the exact adjoint on smooth volumes: <B y, x> within 2% of <y, A x>', async () => {
    const op = await operators();
    const x = voxelize(ball(6, -4, 3, 16), grid, 2);
    const y = await op.forward(voxelize(ball(-5, 7, -2, 14), grid, 2));
    const exact = dot(y, await op.forward(x));
    const approx = dot(await op.voxels(y), x);
    expect(exact).toBeGreaterThan(0);
    expect(Math.abs(approx / exact - 1)).toBeLessThan(0.02);
  });
});
