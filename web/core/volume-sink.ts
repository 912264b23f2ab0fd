// Where a reconstruction puts its volume, slab by slab: an array in memory, a file being
// written, or records in the page's storage. A slab is whole axial slices, x fastest.
import type { Volume, VolumeGrid } from './volume';

export interface VolumeSink {
  /**
   * Receives slices [k0, k0 + slab.length / (nx ny)) in increasing k, each slice once. The
   * array may be reused by the caller after the promise settles.
   */
  write(k0: number, slab: Float32Array): Promise<void>;
}

/** What a volume is, without its voxels. */
export type VolumeInfo = Omit<Volume, 'data'>;

/** A sink that gathers the slabs into one array (for callers that want the whole volume). */
export function collectVolume(grid: VolumeGrid): { sink: VolumeSink; data: Float32Array } {
  const slice = grid.nx * grid.ny;
  const data = new Float32Array(slice * grid.nz);
  return { data, sink: { write: async (k0, slab) => data.set(slab, k0 * slice) } };
}

/** Several sinks fed with the same slabs, in order. */
export function teeSinks(...sinks: VolumeSink[]): VolumeSink {
  return { write: async (k0, slab) => { for (const s of sinks) await s.write(k0, slab); } };
}
