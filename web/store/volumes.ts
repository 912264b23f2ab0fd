// Volumes in storage (cone-beam reconstructions and reference volumes): the voxels are split
// into slabs of whole axial slices, one record per slab under `<prefix>/<owner id>/<slab>`, so
// that no single record grows with the volume. The description (grid, FOV, slab count) lives in
// the owner's record; the slab records are written in the owner's transaction (putAll: all or
// nothing) and checked on reading (kind, schema, owner, position and size).
import { getMany, type UseStore } from 'idb-keyval';
import type { Volume, VolumeGrid } from '../core/volume';
import { pageStore } from './db';
import { checkRecord, RecordError, SCHEMA_VERSION, type Schema } from './records';

/** Largest slab, in voxels (16 MiB of float32). */
export const SLAB_VOXELS = 4 * 2 ** 20;

/** Where a volume's slabs are kept: a result's reconstruction or a scan's reference. */
export type VolumeOwner = 'result' | 'scan';

/** A stored volume's description, kept in its owner's record. */
export interface StoredVolumeInfo {
  grid: VolumeGrid;
  muWater?: number;
  fovRadius?: number;
  fovHalfHeight?: number;
  /** Slices per slab (the last slab may hold fewer) and the number of slabs. */
  slicesPerSlab: number;
  slabs: number;
}

/** One slab of slices [k0, k0 + slices) of a volume (mu, 1/mm, x fastest). */
export interface VolumeSlab {
  schema: Schema;
  kind: 'volume-slab';
  owner: string;
  index: number;
  k0: number;
  slices: number;
  data: Float32Array;
}

const PREFIX: Record<VolumeOwner, string> = { result: 'result-volume', scan: 'scan-volume' };

/** Key of slab `index` of the volume of `owner` / `id`. */
export function slabKey(owner: VolumeOwner, id: string, index: number): string {
  return `${PREFIX[owner]}/${id}/${String(index).padStart(5, '0')}`;
}

/** The key prefix of every slab of a volume. */
export function slabPrefix(owner: VolumeOwner, id: string): string {
  return `${PREFIX[owner]}/${id}/`;
}

/** The description and slab records of a volume, ready for putAll with its owner's record. */
export function volumeEntries(owner: VolumeOwner, id: string, v: Volume, slabVoxels = SLAB_VOXELS): { info: StoredVolumeInfo; entries: Array<[string, VolumeSlab]> } {
  const g = v.grid;
  const perSlice = g.nx * g.ny;
  const slicesPerSlab = Math.max(1, Math.min(g.nz, Math.floor(slabVoxels / perSlice)));
  const slabs = Math.ceil(g.nz / slicesPerSlab);
  const entries: Array<[string, VolumeSlab]> = [];
  for (let s = 0; s < slabs; s++) {
    const k0 = s * slicesPerSlab, slices = Math.min(slicesPerSlab, g.nz - k0);
    const data = v.data.slice(k0 * perSlice, (k0 + slices) * perSlice);
    entries.push([slabKey(owner, id, s), { schema: SCHEMA_VERSION, kind: 'volume-slab', owner: id, index: s, k0, slices, data }]);
  }
  return { info: { grid: g, muWater: v.muWater, fovRadius: v.fovRadius, fovHalfHeight: v.fovHalfHeight, slicesPerSlab, slabs }, entries };
}

/**
 * Writes a volume's slab records as its slices arrive (whole slices, in increasing k, each once),
 * through `put` (the owner's transaction), in the layout volumeEntries gives a whole volume.
 */
export class SlabWriter {
  readonly info: StoredVolumeInfo;
  private readonly pending: Float32Array;
  private filled = 0;
  private next = 0;

  constructor(private readonly owner: VolumeOwner, private readonly id: string, v: Omit<Volume, 'data'>, private readonly put: (key: string, value: VolumeSlab) => Promise<void>, slabVoxels = SLAB_VOXELS) {
    const g = v.grid, perSlice = g.nx * g.ny;
    const slicesPerSlab = Math.max(1, Math.min(g.nz, Math.floor(slabVoxels / perSlice)));
    this.info = { grid: g, muWater: v.muWater, fovRadius: v.fovRadius, fovHalfHeight: v.fovHalfHeight, slicesPerSlab, slabs: Math.ceil(g.nz / slicesPerSlab) };
    this.pending = new Float32Array(slicesPerSlab * perSlice);
  }

  async write(k0: number, slab: Float32Array): Promise<void> {
    const g = this.info.grid, perSlice = g.nx * g.ny;
    if (k0 !== this.next) throw new Error(`volume slabs out of order: slice ${k0} after ${this.next}`);
    let at = 0;
    while (at < slab.length) {
      const take = Math.min(slab.length - at, this.pending.length - this.filled);
      this.pending.set(slab.subarray(at, at + take), this.filled);
      this.filled += take;
      at += take;
      const s = Math.floor(this.next / this.info.slicesPerSlab);
      const slices = Math.min(this.info.slicesPerSlab, g.nz - s * this.info.slicesPerSlab);
      if (this.filled === slices * perSlice) {
        const k = s * this.info.slicesPerSlab;
        await this.put(slabKey(this.owner, this.id, s), { schema: SCHEMA_VERSION, kind: 'volume-slab', owner: this.id, index: s, k0: k, slices, data: this.pending.slice(0, this.filled) });
        this.filled = 0;
      }
    }
    this.next = k0 + slab.length / perSlice;
  }

  /** Throws when slices are missing. */
  finish(): StoredVolumeInfo {
    if (this.next !== this.info.grid.nz || this.filled) throw new Error(`volume: ${this.next} of ${this.info.grid.nz} slices stored`);
    return this.info;
  }
}

/** Reads a stored volume; throws RecordError when a slab is missing or does not fit its description. */
export async function loadVolume(owner: VolumeOwner, id: string, info: StoredVolumeInfo, store: UseStore = pageStore()): Promise<Volume> {
  const g = info.grid;
  const perSlice = g.nx * g.ny;
  const keys = Array.from({ length: info.slabs }, (_, s) => slabKey(owner, id, s));
  const values = await getMany(keys, store);
  const data = new Float32Array(perSlice * g.nz);
  values.forEach((value, s) => {
    const slab = checkRecord<VolumeSlab>(value, 'volume-slab', keys[s]);
    const k0 = s * info.slicesPerSlab, slices = Math.min(info.slicesPerSlab, g.nz - k0);
    if (slab.owner !== id || slab.index !== s || slab.k0 !== k0 || slab.slices !== slices || slab.data.length !== slices * perSlice) {
      throw new RecordError(`stored record ${keys[s]}: slab ${slab.index} of "${slab.owner}" with ${slab.data?.length} voxels from slice ${slab.k0}, expected slab ${s} of "${id}" with ${slices * perSlice} voxels from slice ${k0}`);
    }
    data.set(slab.data, k0 * perSlice);
  });
  return { grid: g, data, quantity: 'mu', muWater: info.muWater, fovRadius: info.fovRadius, fovHalfHeight: info.fovHalfHeight };
}
