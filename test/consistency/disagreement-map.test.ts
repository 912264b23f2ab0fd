// The disagreement map: flag exactly the rays that cross a disk (from the geometry's own ray
// model) and the map must light up the disk and fall off away from it as the share of view
// directions through the disk, about (2 r / d) / pi at distance d (the angle a disk of radius r
// subtends, over the pi radians of a full set of parallel directions: plane geometry).
import { beforeAll, describe, expect, it } from 'vitest';
import { disagreementMap } from '../../web/core/consistency/disagreement-map';
import type { Workspace } from '../../web/core/engine/workspace';
import { fovRadius } from '../../web/core/geometry/view-vectors';
import { gridOrigin, squareGrid } from '../../web/core/image';
import type { Scan } from '../../web/core/scan';
import { rayDistances, type Disk } from '../helpers/disk';
import { localWorkspace } from '../helpers/engine';
import { truncatedThoraxGeometry } from '../helpers/truncated-thorax';

const grid = squareGrid(200, 3);

function distances(d: Disk): Float32Array {
  const { x0, y0 } = gridOrigin(grid);
  return Float32Array.from({ length: grid.nx * grid.ny }, (_, k) => Math.hypot(x0 + (k % grid.nx) * grid.dx - d.cx, y0 + Math.floor(k / grid.nx) * grid.dy - d.cy));
}

describe('disagreement map', () => {
  let ws: Workspace;
  let scan: Scan;
  beforeAll(async () => {
    ws = await localWorkspace(2);
    const geometry = truncatedThoraxGeometry(180);
    scan = { geometry, data: new Float32Array(180 * geometry.detector.channels).fill(1) };
  });

  it('a disk inside the field of view: near 1 on the disk, about (2r/d)/pi away from it', async () => {
    const disk: Disk = { cx: 30, cy: 20, r: 12, value: 0 };
    expect(Math.hypot(disk.cx, disk.cy) + disk.r).toBeLessThan(fovRadius(scan.geometry));
    const flagged = Uint8Array.from(rayDistances(scan.geometry, disk), (d) => (d < disk.r ? 1 : 0));
    const map = await disagreementMap(ws, scan, grid, flagged);
    const dist = distances(disk);
    let coreMin = 1, farWorst = 0;
    for (let i = 0; i < map.length; i++) {
      // Pixels well inside the disk (a pixel and a half from its edge: the projector's interpolation).
      if (dist[i] < disk.r - 4.5) coreMin = Math.min(coreMin, map[i]);
      // Inside the FOV (every view's measured rays cover these pixels) and 40 mm or more from the disk.
      const { x0, y0 } = gridOrigin(grid);
      const r = Math.hypot(x0 + (i % grid.nx) * grid.dx, y0 + Math.floor(i / grid.nx) * grid.dy);
      if (r < 95 && dist[i] >= 40) farWorst = Math.max(farWorst, map[i] - (2 * disk.r) / (Math.PI * dist[i]));
    }
    expect(coreMin).toBeGreaterThan(0.95);
    // Beyond the angle argument only the interpolation at the shadow's edge (measured: 0.0045).
    expect(farWorst).toBeLessThan(0.02);
  });

  it('no flagged ray: an empty map; pixels no measured ray crosses stay 0', async () => {
    const map = await disagreementMap(ws, scan, squareGrid(64, 12), new Uint8Array(scan.data.length));
    expect(map.every((v) => v === 0)).toBe(true);
  });

  it('refuses flags that do not match the scan', async () => {
    await expect(disagreementMap(ws, scan, grid, new Uint8Array(10))).rejects.toThrow(/disagreement map: 10 flags for 62100 measured rays/);
  });
});
