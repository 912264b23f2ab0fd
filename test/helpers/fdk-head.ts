// The head scan the FDK accuracy tests share (fdk.test.ts, fdk.slow.test.ts): exact cone-beam
// projections of the 3D Shepp-Logan head, reconstructed once per variant and arc.
import { expect } from 'vitest';
import type { Geometry } from '../../web/core/geometry/types';
import { sheppLogan3d } from '../../web/core/phantoms/shepp-logan-3d';
import { fdk3d } from '../../web/core/recon/fdk';
import { analyticConeProjections } from '../../web/core/simulate/analytic-cone';
import { cubicGrid, sliceAt } from '../../web/core/volume';
import { cone } from './cone';
import { localWorkspace } from './engine';
import { regionMeans3d } from './regions';

// Head scan: R 500 mm, D 900 mm, 176 x 200 cells of 2 mm (cone half-angle 12.5 degrees, all of
// the 184 x 180 mm head inside the cone), 2-degree steps. Volume 128^3 voxels of 1.5 mm.
export const R = 500, D = 900;
const headScan = (spanDeg: number, views: number) => cone({ channels: 176, rows: 200, pitch: 2, views, spanDeg, R, D, startDeg: 10 });
export const headGrid = cubicGrid(128, 1.5, 128);

const reconstructions = new Map<string, Promise<{ g: Geometry; data: Float32Array; volume: Float32Array }>>();
export function headFdk(variant: 'original' | 'modified', spanDeg: number, views: number) {
  const key = `${variant} ${spanDeg}`;
  if (!reconstructions.has(key)) {
    reconstructions.set(key, (async () => {
      const g = headScan(spanDeg, views);
      const data = await analyticConeProjections(sheppLogan3d(variant), g);
      const ws = await localWorkspace(2);
      const r = await fdk3d(ws, { geometry: g, data }, { grid: headGrid });
      expect(r.warnings).toEqual([]);
      expect(r.backprojector).toBe('axial');
      expect(r.scanType).toBe(spanDeg === 360 ? 'full' : 'short');
      return { g, data, volume: r.volume.data };
    })());
  }
  return reconstructions.get(key)!;
}

/**
 * Table values: Kak & Slaney's 3D head (web/core/phantoms/shepp-logan-3d.ts, from memory; the
 * central slice cuts the brain b and ellipse e). Mean of each region's interior (3 mm from every
 * boundary) within 2% of its table value, or of the brain value for regions whose value is 0 (as
 * in the 2D test). Also checked: the slice z = -25 mm through the ventricles, where FDK is still
 * accurate at this cone angle.
 */
export async function expectHeadRegions(variant: 'original' | 'modified', span: number, views: number): Promise<void> {
  const { volume } = await headFdk(variant, span, views);
  const p = sheppLogan3d(variant);
  for (const [z, expected] of [[0, 2], [-25, 4]] as const) {
    const k = sliceAt(headGrid, z);
    const brain = Math.abs(regionMeans3d(p, headGrid, volume, k, 1, 3).truth);
    let regions = 0;
    for (let e = 0; e < p.solids.length; e++) {
      const m = regionMeans3d(p, headGrid, volume, k, e, 3);
      if (m.n < 8) continue; // the skull shell is thinner than twice the margin
      regions++;
      expect(Math.abs(m.rec - m.truth) / Math.max(Math.abs(m.truth), brain), `z ${z}, ellipsoid ${e}: ${m.rec} vs ${m.truth}`).toBeLessThan(0.02);
    }
    expect(regions).toBe(expected);
  }
}
