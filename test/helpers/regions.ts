// Region statistics of reconstructed volumes against solid phantoms.
import { insideSolid, solidValueAt, type SolidPhantom } from '../../web/core/phantoms/solid';
import { volumeOrigin, type VolumeGrid } from '../../web/core/volume';

/**
 * Mean of the reconstruction and of the truth over the voxels of slice k whose innermost
 * (last listed) solid is `which`, at least `margin` mm from every boundary (checked at 16
 * points around the voxel in the slice and at z +- margin).
 */
export function regionMeans3d(p: SolidPhantom, grid: VolumeGrid, vol: Float32Array, k: number, which: number, margin: number) {
  const { x0, y0, z0 } = volumeOrigin(grid);
  const z = z0 + k * grid.dz;
  let sumRec = 0, sumTrue = 0, n = 0;
  const innermost = (x: number, y: number, zz: number) => p.solids.findLastIndex((s) => insideSolid(s, x, y, zz));
  for (let j = 0; j < grid.ny; j++) {
    for (let i = 0; i < grid.nx; i++) {
      const x = x0 + i * grid.dx, y = y0 + j * grid.dy;
      if (innermost(x, y, z) !== which) continue;
      const probes: Array<[number, number, number]> = [[x, y, z - margin], [x, y, z + margin]];
      for (let a = 0; a < 16; a++) probes.push([x + margin * Math.cos((a * Math.PI) / 8), y + margin * Math.sin((a * Math.PI) / 8), z]);
      if (!probes.every(([xs, ys, zs]) => p.solids.every((s) => insideSolid(s, xs, ys, zs) === insideSolid(s, x, y, z)))) continue;
      sumRec += vol[(k * grid.ny + j) * grid.nx + i];
      sumTrue += solidValueAt(p, x, y, z);
      n++;
    }
  }
  return { rec: sumRec / n, truth: sumTrue / n, n };
}
