// Planes of a stored volume, read slab by slab: an axial plane reads the one slab that holds it;
// a coronal or sagittal plane takes its row or column from every slab, reading them one at a
// time, so the whole volume is never held. Recently read slabs are kept up to a budget, so that
// stepping through the planes of a small volume reads storage once.
import { getMany, type UseStore } from 'idb-keyval';
import type { VolumeGrid } from '../core/volume';
import { pageStore } from './db';
import { checkRecord, RecordError } from './records';
import { slabKey, type StoredVolumeInfo, type VolumeOwner, type VolumeSlab } from './volumes';

export type VolumePlane = 'axial' | 'coronal' | 'sagittal';

/** Bytes of slabs kept between requests. */
export const SLAB_CACHE_BYTES = 256 * 2 ** 20;

/** Recently read slabs, least recently used first. */
const cache = new Map<string, Float32Array>();
let cached = 0;

function remember(key: string, data: Float32Array): void {
  cache.set(key, data);
  cached += data.byteLength;
  for (const [k, d] of cache) {
    if (cached <= SLAB_CACHE_BYTES) break;
    cache.delete(k);
    cached -= d.byteLength;
  }
}

/** Slab s of a stored volume, checked (from the cache when it was read lately). */
async function slab(owner: VolumeOwner, id: string, info: StoredVolumeInfo, s: number, store: UseStore): Promise<Float32Array> {
  const key = slabKey(owner, id, s);
  const hit = cache.get(key);
  if (hit) {
    cache.delete(key);
    cache.set(key, hit);
    return hit;
  }
  const [value] = await getMany([key], store);
  const r = checkRecord<VolumeSlab>(value, 'volume-slab', key);
  const g = info.grid, k0 = s * info.slicesPerSlab, slices = Math.min(info.slicesPerSlab, g.nz - k0);
  if (r.owner !== id || r.index !== s || r.k0 !== k0 || r.slices !== slices || r.data?.length !== slices * g.nx * g.ny) {
    throw new RecordError(`stored record ${key}: slab ${r.index} of "${r.owner}" does not fit its volume (expected slab ${s} of "${id}", slices ${k0} to ${k0 + slices - 1})`);
  }
  remember(key, r.data);
  return r.data;
}

/**
 * A stored volume as a file (a header, then every slab as `layout` arranges its voxels), built
 * slab by slab into a Blob that the browser may keep on disk, so the page can save it without
 * holding the voxels.
 */
export async function volumeFileBlob(
  owner: VolumeOwner, id: string, info: StoredVolumeInfo, header: Uint8Array, layout: (slab: Float32Array) => Float32Array, store: UseStore = pageStore(),
): Promise<Blob> {
  let blob = new Blob([header as BlobPart]);
  for (let s = 0; s < info.slabs; s++) blob = new Blob([blob, layout(await slab(owner, id, info, s, store)) as BlobPart]);
  return blob;
}

/** Plane `index` of a stored volume (axial k, coronal j, sagittal i), first axis fastest. */
export async function readVolumePlane(owner: VolumeOwner, id: string, info: StoredVolumeInfo, plane: VolumePlane, index: number, store: UseStore = pageStore()): Promise<Float32Array> {
  const g = info.grid;
  const count = plane === 'axial' ? g.nz : plane === 'coronal' ? g.ny : g.nx;
  if (!Number.isInteger(index) || index < 0 || index >= count) throw new RangeError(`${plane} plane ${index} outside 0..${count - 1}`);
  const nxy = g.nx * g.ny;
  if (plane === 'axial') {
    const s = Math.floor(index / info.slicesPerSlab);
    const k = index - s * info.slicesPerSlab;
    return (await slab(owner, id, info, s, store)).slice(k * nxy, (k + 1) * nxy);
  }
  const out = new Float32Array((plane === 'coronal' ? g.nx : g.ny) * g.nz);
  for (let s = 0; s < info.slabs; s++) {
    const data = await slab(owner, id, info, s, store);
    const k0 = s * info.slicesPerSlab;
    for (let k = k0; k < Math.min(g.nz, k0 + info.slicesPerSlab); k++) takeLine(data, (k - k0) * nxy, g, plane, index, out, k);
  }
  return out;
}

/** The row j (coronal) or column i (sagittal) of one slice into row k of the plane. */
function takeLine(data: Float32Array, at: number, g: VolumeGrid, plane: VolumePlane, index: number, out: Float32Array, k: number): void {
  if (plane === 'coronal') {
    out.set(data.subarray(at + index * g.nx, at + (index + 1) * g.nx), k * g.nx);
    return;
  }
  for (let j = 0; j < g.ny; j++) out[k * g.ny + j] = data[at + j * g.nx + index];
}
