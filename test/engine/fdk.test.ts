import { describe, expect, it } from 'vitest';
import type { Buf, Workspace } from '../../web/core/engine/workspace';
import { CancelledError, InputError } from '../../web/core/errors';
import { validateGeometry } from '../../web/core/geometry/validate';
import { waterCylinder3d } from '../../web/core/phantoms/thorax-3d';
import { fdk3d, type RowExtension } from '../../web/core/recon/fdk';
import { analyticConeProjections } from '../../web/core/simulate/analytic-cone';
import { seededRandom } from '../../web/core/simulate/noise';
import { cubicGrid, sliceAt, volumeOrigin, type VolumeGrid } from '../../web/core/volume';
import { localWorkspace } from '../helpers/engine';
import { D, expectHeadRegions, headFdk, headGrid, R } from '../helpers/fdk-head';
import { asCalibratedViews } from '../../web/core/geometry/calibrated';
import { cone } from '../helpers/cone';
import { regionMeans3d } from '../helpers/regions';
import { sheppLogan3d } from '../../web/core/phantoms/shepp-logan-3d';

describe('FDK of exact 3D Shepp-Logan projections', () => {
  // The short scan with Parker weights (higher-contrast table); the full scans of both tables
  // and the cone-beam drop along the axis run in fdk.slow.test.ts.
  it('short scan (210 degrees) + Parker, higher contrast: central-slice regions within 2 percent of the table', () => expectHeadRegions('modified', 210, 105));
});

describe('FDK backprojectors', () => {
  // Circular orbits take the axial backprojector (detector column and distance weight per
  // (x, y, view), only the row stepped along z); calibrated trajectories whose panel leans out
  // of the rotation plane take the general one. The same head scan, described with a lean of
  // 1e-9 (0.2 milli-arc-seconds, nothing a projection can show), must meet the same table and
  // agree with the axial volume to float rounding.
  it('the general backprojector meets the table on the head scan and agrees with the axial one', async () => {
    const axial = await headFdk('modified', 210, 105);
    const p = sheppLogan3d('modified');
    const r = await fdk3d(await localWorkspace(2), { geometry: asCalibratedViews(axial.g, 1e-9), data: axial.data }, { grid: headGrid });
    expect(r.backprojector).toBe('general');
    const k = sliceAt(headGrid, 0);
    const brain = Math.abs(regionMeans3d(p, headGrid, r.volume.data, k, 1, 3).truth);
    for (let e = 0; e < p.solids.length; e++) {
      const m = regionMeans3d(p, headGrid, r.volume.data, k, e, 3);
      if (m.n < 8) continue;
      expect(Math.abs(m.rec - m.truth) / Math.max(Math.abs(m.truth), brain), `ellipsoid ${e}`).toBeLessThan(0.02);
    }
    // Regression pin: the two paths differ only by float rounding of the detector coordinates,
    // which the ramp-filtered skull edges turn into a few 1e-4 of the brain value at most.
    let d2 = 0;
    for (let i = 0; i < r.volume.data.length; i++) d2 += (axial.volume[i] - r.volume.data[i]) ** 2;
    expect(Math.sqrt(d2 / r.volume.data.length) / brain).toBeLessThan(5e-5);
    expect(maxDiff(axial.volume, r.volume.data) / brain).toBeLessThan(1e-3);
  });
});

describe('FDK properties', () => {
  // FDK reconstructs objects that do not vary along the rotation axis exactly (Feldkamp, Davis &
  // Kress 1984; the property is from memory): a water cylinder longer than the cone shows no
  // drop, at any height the detector covers (140 rows of 2 mm reach 71 mm at the cylinder's
  // edge on the source side).
  it('a long uniform cylinder reconstructs flat along z (no cone-beam drop)', async () => {
    const g = cone({ channels: 120, rows: 140, pitch: 2, views: 120, R, D });
    const p = waterCylinder3d(60, 400);
    const grid = cubicGrid(64, 2.5, 72);
    const ws = await localWorkspace(2);
    const { volume } = await fdk3d(ws, { geometry: g, data: await analyticConeProjections(p, g) }, { grid, filter: 'shepp-logan' });
    const { x0, y0 } = volumeOrigin(grid);
    for (const z of [-60, -30, 0, 30, 60]) {
      const k = sliceAt(grid, z);
      let sum = 0, n = 0;
      for (let jj = 0; jj < 64; jj++) {
        for (let ii = 0; ii < 64; ii++) {
          if (Math.hypot(x0 + ii * 2.5, y0 + jj * 2.5) > 40) continue;
          sum += volume.data[(k * 64 + jj) * 64 + ii];
          n++;
        }
      }
      expect(n).toBeGreaterThan(700);
      expect(Math.abs(sum / n - p.muWater) / p.muWater, `z ${z}`).toBeLessThan(0.01);
    }
  });
});

/** A small random scan for the plumbing tests. */
function smallScan() {
  const g = cone({ channels: 40, rows: 18, pitch: 2, views: 30, R: 300, D: 540, offset: [1.5, -3] });
  const rand = seededRandom(9);
  return { geometry: g, data: Float32Array.from({ length: 30 * 18 * 40 }, () => rand()) };
}
const smallGrid: VolumeGrid = { nx: 30, ny: 26, nz: 14, dx: 2, dy: 2.2, dz: 1.8, cx: 1, cy: -2, cz: 1.5 };

function maxDiff(a: Float32Array, b: Float32Array): number {
  let d = 0;
  for (let i = 0; i < a.length; i++) d = Math.max(d, Math.abs(a[i] - b[i]));
  return d;
}

describe('FDK pipeline', () => {
  it('does not depend on the chunk size or on how many workers share the work', async () => {
    const scan = smallScan();
    const one = await fdk3d(await localWorkspace(1), scan, { grid: smallGrid });
    const split = await fdk3d(await localWorkspace(3), scan, { grid: smallGrid, chunkBytes: 4 * 21 * 43 * 7 });
    const scale = Math.max(...one.volume.data.map(Math.abs));
    expect(scale).toBeGreaterThan(0);
    // Every voxel adds its views in view order whatever the split: the same to the bit.
    expect(maxDiff(one.volume.data, split.volume.data)).toBe(0);
  });

  // The hook for per-row truncation correction. Padding every row with zeros leaves the filtered
  // values on the measured channels as they were (the FFT pads with zeros anyway), so voxels
  // whose rays all land on the measured detector (inside the field of view, one cell of margin)
  // must not change; outside, the ramp filter's tails now reach the backprojection. This checks
  // that weights, filter and backprojection all move to the extended detector's coordinates.
  it('runs a row extension before filtering, on the extended detector', async () => {
    const scan = smallScan();
    const [left, right] = [7, 12];
    let calls = 0;
    const zeroPad: RowExtension = {
      left, right,
      async extendRows(ws: Workspace, src: Buf, dst: Buf, view0: number, view1: number) {
        calls++;
        const rows = (view1 - view0) * 18;
        const inp = await ws.read(src, 0, rows * 40);
        const out = new Float32Array(rows * (40 + left + right));
        for (let r = 0; r < rows; r++) out.set(inp.subarray(r * 40, (r + 1) * 40), r * (40 + left + right) + left);
        await ws.write(dst, out);
      },
    };
    const plain = await fdk3d(await localWorkspace(1), scan, { grid: smallGrid });
    const padded = await fdk3d(await localWorkspace(1), scan, { grid: smallGrid, extension: zeroPad, chunkBytes: 4 * 21 * 62 * 10 });
    const scale = Math.max(...plain.volume.data.map(Math.abs));
    expect(calls).toBe(3);
    // Nearer detector edge 38.5 mm at 540 mm: radius 300 sin(atan(38.5 / 540)) = 21.3 mm.
    const { x0, y0 } = volumeOrigin(smallGrid);
    let inside = 0, outside = 0, n = 0;
    for (let k = 0; k < smallGrid.nz; k++) {
      for (let j = 0; j < smallGrid.ny; j++) {
        for (let i = 0; i < smallGrid.nx; i++) {
          const at = (k * smallGrid.ny + j) * smallGrid.nx + i;
          const d = Math.abs(plain.volume.data[at] - padded.volume.data[at]) / scale;
          if (Math.hypot(x0 + i * smallGrid.dx, y0 + j * smallGrid.dy) < 19) {
            inside = Math.max(inside, d);
            n++;
          } else outside = Math.max(outside, d);
        }
      }
    }
    expect(n).toBeGreaterThan(2000);
    expect(inside).toBeLessThan(1e-5);
    expect(outside).toBeGreaterThan(0.01);
  });

  it('rejects what it cannot reconstruct, naming the problem', async () => {
    const ws = await localWorkspace();
    const scan = smallScan();
    await expect(fdk3d(ws, { ...scan, data: scan.data.subarray(1) }, { grid: smallGrid })).rejects.toThrow(/scan data: got 21599 values, expected 30 views x 18 rows x 40 channels/);
    await expect(fdk3d(ws, scan, { grid: { ...smallGrid, nx: 400, dx: 2 } })).rejects.toThrow(InputError);
    await expect(fdk3d(ws, scan, { grid: { ...smallGrid, dz: 0 } })).rejects.toThrow(/volume grid dz: got 0/);
    await expect(fdk3d(ws, scan, { grid: smallGrid, filter: 'box' as never })).rejects.toThrow(/filter: got "box"/);
    const fan = { ...scan.geometry, kind: 'fan' as const, detector: { ...scan.geometry.detector, rows: 1 } };
    await expect(fdk3d(ws, { geometry: fan, data: scan.data }, { grid: smallGrid })).rejects.toThrow(/expected "cone"/);
    // A calibrated view whose detector faces away from the isocentre.
    const away = validateGeometry({
      kind: 'cone', detector: { channels: 40, rows: 18, pitch: [2, 2] }, sourceIsocenter: 300, sourceDetector: 540,
      views: Array.from({ length: 30 }, (_, v) => ({ focalSpot: [300, 0, 0], detectorCenter: [v === 4 ? 500 : -240, 0, 0], channelStep: [0, 2, 0], rowStep: [0, 0, 2] })),
    });
    await expect(fdk3d(ws, { geometry: away, data: scan.data }, { grid: smallGrid })).rejects.toThrow(/geometry view 4: the isocentre lies -300.0 mm from the source/);
  });

  it('can be cancelled between chunks', async () => {
    const ws = await localWorkspace();
    const ctl = new AbortController();
    const stages: number[] = [];
    const run = fdk3d(ws, smallScan(), { grid: smallGrid, chunkBytes: 4 * 21 * 43 * 5 }, {
      signal: ctl.signal,
      onProgress: (f) => {
        stages.push(f);
        if (stages.length === 2) ctl.abort();
      },
    });
    await expect(run).rejects.toThrow(CancelledError);
    expect(stages.length).toBe(2);
  });
});
