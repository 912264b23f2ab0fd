import { describe, expect, it } from 'vitest';
import { pixelAt } from '../../web/ui/logic/measure';
import { atIndex, fovOutline, fromPlane, planeCount, planeGrid, planeImage, planeIndex, planeValues, PLANES, toPlane } from '../../web/ui/logic/volume-planes';
import { volumeOrigin, type Volume, type VolumeGrid } from '../../web/core/volume';

// A volume whose voxel value encodes its own position: value = x + 1000 y + 1e6 z (mm), so a
// plane's pixel says which voxel it came from (DEVELOPERS.md, "Geometry": voxel centres, x fastest).
const grid: VolumeGrid = { nx: 6, ny: 5, nz: 4, dx: 2, dy: 3, dz: 4, cx: 1, cy: -2, cz: 6 };
const o = volumeOrigin(grid);
const at = (i: number, j: number, k: number) => ({ x: o.x0 + i * grid.dx, y: o.y0 + j * grid.dy, z: o.z0 + k * grid.dz });
const code = (p: { x: number; y: number; z: number }) => p.x + 1000 * p.y + 1e6 * p.z;
const data = new Float32Array(6 * 5 * 4);
for (let k = 0; k < 4; k++) for (let j = 0; j < 5; j++) for (let i = 0; i < 6; i++) data[(k * 5 + j) * 6 + i] = code(at(i, j, k));
const volume: Volume = { grid, data, quantity: 'mu', fovRadius: 5, fovHalfHeight: 7 };

describe('planes of a volume', () => {
  it('map plane points to 3D and back, keeping the coordinate across the plane', () => {
    const p = { x: 3.5, y: -1.25, z: 8 };
    for (const plane of PLANES) {
      const q = toPlane(plane, p);
      expect(fromPlane(plane, q, p)).toEqual(p);
    }
    expect(fromPlane('coronal', { x: 1, y: 2 }, p)).toEqual({ x: 1, y: p.y, z: 2 });
    expect(fromPlane('sagittal', { x: 1, y: 2 }, p)).toEqual({ x: p.x, y: 1, z: 2 });
  });

  it('show the voxels the plane passes through, at the positions the plane grid gives them', () => {
    const p = at(4, 1, 2);
    for (const plane of PLANES) {
      const g = planeGrid(grid, plane);
      const values = planeValues(volume, plane, p);
      expect(values.length).toBe(g.nx * g.ny);
      // Every pixel of the plane is the voxel at its 3D position (the code says where it was).
      for (let b = 0; b < g.ny; b++) {
        for (let a = 0; a < g.nx; a++) {
          const q = { x: g.cx + (a - (g.nx - 1) / 2) * g.dx, y: g.cy + (b - (g.ny - 1) / 2) * g.dy };
          expect(pixelAt(values, g, q)).toBeCloseTo(code(fromPlane(plane, q, p)), 0);
        }
      }
    }
    expect([planeIndex(grid, 'axial', p), planeIndex(grid, 'coronal', p), planeIndex(grid, 'sagittal', p)]).toEqual([2, 1, 4]);
    expect([planeCount(grid, 'axial'), planeCount(grid, 'coronal'), planeCount(grid, 'sagittal')]).toEqual([4, 5, 6]);
    expect(atIndex(grid, 'axial', 3, p)).toEqual({ ...p, z: at(0, 0, 3).z });
    // Beyond the grid the nearest slice is shown.
    expect(planeIndex(grid, 'axial', { ...p, z: 1000 })).toBe(3);
  });

  it('mark the FOV cylinder: a circle in axial slices within its height, a rectangle where the other planes cut it', () => {
    const inside = planeImage(volume, 'axial', { x: 0, y: 0, z: 6 }, 'a');
    expect(inside.fovRadius).toBe(5);
    expect(planeImage(volume, 'axial', { x: 0, y: 0, z: 14 }, 'a').fovRadius).toBeUndefined();
    // Coronal plane at y = 3 cuts the 5 mm cylinder 4 mm either side of the axis.
    const cor = fovOutline('coronal', { x: 0, y: 3, z: 0 }, 5, 7)!;
    expect(cor.map((q) => [q.x, q.y])).toEqual([[-4, -7], [4, -7], [4, 7], [-4, 7]]);
    expect(fovOutline('sagittal', { x: 6, y: 0, z: 0 }, 5, 7)).toBeUndefined();
    expect(planeImage(volume, 'sagittal', at(3, 2, 1), 's').axes).toEqual(['y', 'z']);
  });
});
