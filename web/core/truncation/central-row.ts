// The central detector row of a cone-beam scan as a fan-beam scan, so that the 2D truncation
// analysis (edges, water-cylinder reach, mass) can report on a cone-beam scan.
import type { Geometry } from '../geometry/types';
import type { Scan } from '../scan';

/** Index of the detector row nearest v = 0 (the plane of the source orbit). */
export function centralRow(g: Geometry): number {
  const d = g.detector;
  const k = Math.round((d.rows - 1) / 2 - d.offset[1] / d.pitch[1]);
  return Math.min(d.rows - 1, Math.max(0, k));
}

/** A fan-beam scan made of row `centralRow` of every view (flat detector, same channels). */
export function centralRowScan(scan: Scan): Scan {
  const g = scan.geometry;
  const d = g.detector;
  if (g.kind !== 'cone') return scan;
  const row = centralRow(g);
  const nViews = scan.data.length / (d.channels * d.rows);
  const data = new Float32Array(nViews * d.channels);
  for (let v = 0; v < nViews; v++) {
    const from = (v * d.rows + row) * d.channels;
    data.set(scan.data.subarray(from, from + d.channels), v * d.channels);
  }
  const geometry: Geometry = { ...g, kind: 'fan', detector: { ...d, shape: 'flat', rows: 1, offset: [d.offset[0], 0] } };
  return { ...scan, geometry, data };
}
