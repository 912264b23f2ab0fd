// Detector rows of a cone-beam scan as fan-beam scans, so that the 2D truncation analysis
// (edges, water-cylinder reach, mass) can report on a cone-beam scan and plan its extension row
// by row. A row's rays, projected onto the plane of the source orbit, are the central row's
// rays: the ray coordinate s of a channel is the same in every row.
import { throwIfCancelled } from '../errors';
import { viewCount, type Geometry } from '../geometry/types';
import type { ProjectionSource } from '../projection-source';
import { firstChannelU, firstRowV } from '../geometry/view-vectors';
import type { Scan } from '../scan';

/** Index of the detector row nearest v = 0 (the plane of the source orbit). */
export function centralRow(g: Geometry): number {
  const d = g.detector;
  const k = Math.round((d.rows - 1) / 2 - d.offset[1] / d.pitch[1]);
  return Math.min(d.rows - 1, Math.max(0, k));
}

/** The fan-beam geometry of one detector row (flat detector, same channels and views). */
export function rowGeometry(g: Geometry): Geometry {
  const d = g.detector;
  return { ...g, kind: 'fan', detector: { ...d, shape: 'flat', rows: 1, offset: [d.offset[0], 0] } };
}

/** A fan-beam scan made of detector row `row` of every view (a 2D scan is returned as it is). */
export function rowScan(scan: Scan, row: number): Scan {
  const g = scan.geometry;
  const d = g.detector;
  if (g.kind !== 'cone') return scan;
  const nViews = scan.data.length / (d.channels * d.rows);
  const data = new Float32Array(nViews * d.channels);
  for (let v = 0; v < nViews; v++) {
    const from = (v * d.rows + row) * d.channels;
    data.set(scan.data.subarray(from, from + d.channels), v * d.channels);
  }
  return { ...scan, geometry: rowGeometry(g), data };
}

/** The central row of a cone-beam scan as a fan-beam scan. */
export function centralRowScan(scan: Scan): Scan {
  return rowScan(scan, centralRow(scan.geometry));
}

/**
 * How much longer a ray of detector row `row` runs through an object that does not vary along z
 * than its projection onto the orbit plane: sqrt(D^2 + u^2 + v^2) / sqrt(D^2 + u^2) (the secant
 * of the ray's tilt), at the detector edges (u varies it by well under 0.1% over a tail). A water
 * cylinder seen by that row projects as 2 (mu sec) sqrt(r^2 - s^2): the row's fits use mu sec.
 * `sourceDetector` is D, mm.
 */
export function rowSecant(g: Geometry, row: number, sourceDetector: number): number {
  const d = g.detector;
  const v = firstRowV(g) + row * d.pitch[1];
  const u0 = firstChannelU(g), u1 = u0 + (d.channels - 1) * d.pitch[0];
  const sec = (u: number) => Math.sqrt(1 + (v * v) / (sourceDetector ** 2 + u * u));
  return (sec(u0) + sec(u1)) / 2;
}

/** Collects one detector row of every view from chunks of views as they pass (views x channels). */
export class RowCollector {
  readonly data: Float32Array;
  private readonly nCh: number;
  private readonly frame: number;

  constructor(g: Geometry, views: number, readonly row = g.kind === 'cone' ? centralRow(g) : 0) {
    this.nCh = g.detector.channels;
    this.frame = g.detector.channels * g.detector.rows;
    this.data = new Float32Array(views * this.nCh);
  }

  /** Takes the row from the views of `chunk`, the first being view v0. */
  add(v0: number, chunk: Float32Array): void {
    for (let v = 0; v < chunk.length / this.frame; v++) {
      const from = v * this.frame + this.row * this.nCh;
      this.data.set(chunk.subarray(from, from + this.nCh), (v0 + v) * this.nCh);
    }
  }
}

/** The central row of a cone-beam source as a fan-beam scan, read one chunk of views at a time. */
export async function centralRowOfSource(source: ProjectionSource, signal?: AbortSignal): Promise<Scan> {
  const g = source.geometry, views = viewCount(g);
  const rows = new RowCollector(g, views);
  const step = source.chunkViews ?? Math.max(1, Math.floor(2 ** 23 / (g.detector.channels * g.detector.rows)));
  for (let v = 0; v < views; v += step) {
    throwIfCancelled(signal);
    rows.add(v, await source.read(v, Math.min(views, v + step)));
  }
  return { geometry: rowGeometry(g), data: rows.data, muWater: source.muWater };
}
