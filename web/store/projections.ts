// A scan's projections in storage: chunks of whole views, one record per chunk under
// `scan-proj/<scan id>/<chunk>`, so that no record grows with the scan and a reconstruction can
// read a chunk at a time. The chunk size follows the panel (about CHUNK_BYTES per record). A
// preview row (the detector row nearest the orbit plane, every view) is kept apart for the page
// to draw. Schema-1 scans hold their projections in one record; they are read through the same
// source, sliced.
import { getMany, type UseStore } from 'idb-keyval';
import { viewCount, type Geometry } from '../core/geometry/types';
import type { ProjectionSource } from '../core/projection-source';
import { viewSize } from '../core/projection-source';
import { RowCollector } from '../core/truncation/central-row';
import { pageStore } from './db';
import { checkRecord, keys, RecordError, SCHEMA_VERSION, type ProjectionChunk, type ScanData, type ScanMeta, type ScanPreview, type StoredProjections } from './records';

/** Bytes of line integrals a chunk record holds at most (one view more when a view is larger). */
export const CHUNK_BYTES = 8 * 2 ** 20;

/** Views per chunk for a panel: as many as fit in CHUNK_BYTES, 1 to 256. */
export function chunkViewsFor(g: Geometry): number {
  return Math.max(1, Math.min(256, Math.floor(CHUNK_BYTES / (viewSize(g) * 4))));
}

/** Key of chunk `index` of scan `id`. */
export function chunkKey(id: string, index: number): string {
  return `${keys.scanChunks(id)}${String(index).padStart(6, '0')}`;
}

/** The layout of a scan of `g` in chunks. */
export function projectionLayout(g: Geometry): StoredProjections {
  const viewsPerChunk = chunkViewsFor(g);
  return { viewsPerChunk, chunks: Math.ceil(viewCount(g) / viewsPerChunk) };
}

/** A chunk record. */
export function chunkRecord(id: string, index: number, v0: number, views: number, data: Float32Array): ProjectionChunk {
  return { schema: SCHEMA_VERSION, kind: 'projection-chunk', owner: id, index, v0, views, data };
}

/** Collects the preview row (the row nearest the orbit plane) from chunks of views as they pass. */
export class PreviewRow extends RowCollector {
  constructor(g: Geometry) {
    super(g, viewCount(g));
  }

  record(id: string): ScanPreview {
    return { schema: SCHEMA_VERSION, kind: 'scan-preview', id, row: this.row, data: this.data };
  }
}

/** A stored scan's projections as a source: chunk records read on demand (or a schema-1 record, sliced). */
export function storedProjections(meta: ScanMeta, store: UseStore = pageStore()): ProjectionSource {
  const g = meta.geometry, n = viewSize(g), views = viewCount(g);
  const base = { geometry: g, muWater: meta.muWater, notes: meta.notes };
  const layout = meta.projections;
  if (!layout) {
    let whole: Promise<Float32Array> | undefined;
    return {
      ...base,
      async read(v0, v1) {
        whole ??= legacyProjections(meta, store);
        return (await whole).subarray(v0 * n, v1 * n);
      },
    };
  }
  const per = layout.viewsPerChunk;
  return {
    ...base,
    chunkViews: per,
    async read(v0, v1) {
      if (!(v0 >= 0 && v1 <= views && v0 < v1)) throw new RangeError(`views [${v0}, ${v1}) outside 0..${views}`);
      const c0 = Math.floor(v0 / per), c1 = Math.ceil(v1 / per);
      const ks = Array.from({ length: c1 - c0 }, (_, i) => chunkKey(meta.id, c0 + i));
      const records = await getMany(ks, store);
      const chunks = records.map((r, i) => checkChunk(r, ks[i], meta.id, c0 + i, per, views, n));
      if (chunks.length === 1 && v0 === chunks[0].v0 && v1 === chunks[0].v0 + chunks[0].views) return chunks[0].data;
      const out = new Float32Array((v1 - v0) * n);
      for (const c of chunks) {
        const a = Math.max(v0, c.v0), b = Math.min(v1, c.v0 + c.views);
        out.set(c.data.subarray((a - c.v0) * n, (b - c.v0) * n), (a - v0) * n);
      }
      return out;
    },
  };
}

function checkChunk(value: unknown, key: string, id: string, index: number, per: number, views: number, n: number): ProjectionChunk {
  const c = checkRecord<ProjectionChunk>(value, 'projection-chunk', key);
  const v0 = index * per, count = Math.min(per, views - v0);
  if (c.owner !== id || c.index !== index || c.v0 !== v0 || c.views !== count || c.data?.length !== count * n) {
    throw new RecordError(`stored record ${key}: chunk ${c.index} of "${c.owner}" with ${c.data?.length} values from view ${c.v0}, expected chunk ${index} of "${id}" with ${count * n} values from view ${v0}`);
  }
  return c;
}

async function legacyProjections(meta: ScanMeta, store: UseStore): Promise<Float32Array> {
  const [d] = await getMany([keys.scanData(meta.id)], store);
  const data = checkRecord<ScanData>(d, 'scan-data', keys.scanData(meta.id));
  if (!data.projections) throw new RecordError(`stored record ${keys.scanData(meta.id)}: the projections are missing`);
  return data.projections;
}

/** A stored scan's preview row (views x channels), from its preview record or, for schema-1 scans, its projections. */
export async function loadPreview(meta: ScanMeta, store: UseStore = pageStore()): Promise<ScanPreview> {
  if (!meta.projections) {
    const g = meta.geometry, all = await legacyProjections(meta, store);
    const p = new PreviewRow(g);
    p.add(0, all);
    return p.record(meta.id);
  }
  const [v] = await getMany([keys.scanPreview(meta.id)], store);
  return checkRecord<ScanPreview>(v, 'scan-preview', keys.scanPreview(meta.id));
}
