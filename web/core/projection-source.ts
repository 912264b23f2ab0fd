// Projections read a chunk of views at a time: from an array in memory, from the page's storage
// or from files on disk. Reconstructions that stream (FDK) take a ProjectionSource, so a scan
// larger than the memory at hand never has to be held whole.
import { InputError, throwIfCancelled } from './errors';
import type { Geometry } from './geometry/types';
import { viewCount } from './geometry/types';
import type { Scan } from './scan';

export interface ProjectionSource {
  /** Geometry of the projections as read (after any binning or cropping). */
  readonly geometry: Geometry;
  /** Attenuation of water, 1/mm, when known. */
  readonly muWater?: number;
  readonly notes?: Record<string, string>;
  /** Views per stored chunk: reads of whole chunks cost least (absent: any size). */
  readonly chunkViews?: number;
  /**
   * Line integrals of views [v0, v1), [view][row][channel]. The array belongs to the caller
   * until its next read (a source may hand out a view into its own memory).
   */
  read(v0: number, v1: number): Promise<Float32Array>;
}

/** Values in one view (rows x channels). */
export function viewSize(g: Geometry): number {
  return g.detector.channels * g.detector.rows;
}

/** A scan held in memory as a source (reads are views into its array). */
export function scanSource(scan: Scan): ProjectionSource {
  const n = viewSize(scan.geometry), views = viewCount(scan.geometry);
  if (scan.data.length !== views * n) {
    const d = scan.geometry.detector;
    throw new InputError(`scan data: got ${scan.data.length} values, expected ${views} views x ${d.rows} rows x ${d.channels} channels = ${views * n}`);
  }
  return {
    geometry: scan.geometry,
    muWater: scan.muWater,
    notes: scan.notes,
    read: async (v0, v1) => scan.data.subarray(v0 * n, v1 * n),
  };
}

/** True for a Scan (projections in memory), false for another source. */
export function isScan(s: Scan | ProjectionSource): s is Scan {
  return (s as Scan).data instanceof Float32Array;
}

/** Any source as a source. */
export function asSource(s: Scan | ProjectionSource): ProjectionSource {
  return isScan(s) ? scanSource(s) : s;
}

/** Reads every view of a source into one array (for methods that need the whole scan). */
export async function readWholeScan(source: ProjectionSource, signal?: AbortSignal): Promise<Scan> {
  const g = source.geometry, n = viewSize(g), views = viewCount(g);
  const data = new Float32Array(views * n);
  const step = source.chunkViews ?? views;
  for (let v = 0; v < views; v += step) {
    throwIfCancelled(signal);
    const v1 = Math.min(views, v + step);
    data.set(await source.read(v, v1), v * n);
  }
  return { geometry: g, data, muWater: source.muWater, notes: source.notes };
}
