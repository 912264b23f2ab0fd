// Edits of the stored library the page asks the coordinator for: renames, geometry edits and
// deletions of scans, results and networks, and what the page shows of a scan (its analysed
// sinogram row, truncation report and reference image). The coordinator is the only writer of
// stored records; each edit is one read-modify-write transaction (store/transact.ts), so it never
// waits for a long run and a long run never undoes it.
import type { Image2D } from '../core/image';
import { rowOverview, truncationOverview, type TruncationOverview } from '../core/truncation/overview';
import type { UseStore } from '../store/db';
import { deleteModel } from '../store/models';
import { deleteResult, getResultMeta, renameResult } from '../store/results';
import { RecordError, type ResultMeta, type ScanMeta } from '../store/records';
import { readVolumePlane, volumeFileBlob, type VolumePlane } from '../store/volume-planes';
import type { StoredVolumeInfo, VolumeOwner } from '../store/volumes';
import { rowsToLps } from '../core/formats/volume';
import { volumeNrrdHeader } from '../core/formats/volume-nrrd';
import { loadPreview } from '../store/projections';
import { deleteScan, getScanMeta, loadScan, loadScanReference, renameScan, setScanGeometry } from '../store/scans';

/** Library edits, by op name. */
export type LibraryRequest =
  | { op: 'rename-scan'; scanId: string; name: string }
  | { op: 'set-geometry'; scanId: string; geometry: unknown }
  | { op: 'delete-scan'; scanId: string }
  | { op: 'rename-result'; resultId: string; name: string }
  | { op: 'delete-result'; resultId: string }
  | { op: 'delete-model'; modelId: string }
  | { op: 'scan-overview'; scanId: string }
  | { op: 'volume-plane'; volume: StoredVolumeRef; plane: VolumePlane; index: number }
  | { op: 'volume-file'; volume: StoredVolumeRef };

/** A stored volume: a result's reconstruction, or a scan's reference volume. */
export interface StoredVolumeRef {
  owner: VolumeOwner;
  id: string;
}

/** What the page draws of a scan: never its projections, only the analysed row. */
export interface ScanOverview extends TruncationOverview {
  scan: ScanMeta;
  /** The reference image stored with the scan (ground truth of a simulation), if any. */
  reference?: Image2D;
}

export interface LibraryReplies {
  'rename-scan': ScanMeta;
  'set-geometry': ScanMeta;
  'delete-scan': null;
  'rename-result': ResultMeta;
  'delete-result': null;
  'delete-model': null;
  'scan-overview': ScanOverview;
  /** The plane's voxels (mu, first axis fastest). */
  'volume-plane': Float32Array;
  /** The volume as an NRRD file (float32 mu). */
  'volume-file': Blob;
}

/** The stored description of a volume (its grid, FOV and slab layout). */
async function volumeInfo(store: UseStore, v: StoredVolumeRef): Promise<StoredVolumeInfo> {
  const info = v.owner === 'result' ? (await getResultMeta(v.id, store)).volume : (await getScanMeta(v.id, store)).referenceVolume;
  if (!info) throw new RecordError(`${v.owner} ${v.id} holds no volume`);
  return info;
}

/**
 * The analysed row of a stored scan, its truncation report and its reference image. A cone-beam
 * scan's row comes from its stored preview, so its projections are not read.
 */
export async function scanOverview(store: UseStore, scanId: string): Promise<ScanOverview> {
  const { meta, reference } = await loadScanReference(scanId, store);
  const ref = reference ? { reference } : {};
  if (meta.geometry.kind === 'cone') {
    const p = await loadPreview(meta, store);
    return { scan: meta, ...rowOverview(meta.geometry, p.row, p.data, meta.muWater), ...ref };
  }
  const { scan } = await loadScan(scanId, store);
  return { scan: meta, ...truncationOverview(scan), ...ref };
}

/** Answers one library request. */
export async function libraryOp(store: UseStore, req: LibraryRequest): Promise<LibraryReplies[LibraryRequest['op']]> {
  switch (req.op) {
    case 'rename-scan':
      return renameScan(req.scanId, req.name, store);
    case 'set-geometry':
      return setScanGeometry(req.scanId, req.geometry, store);
    case 'delete-scan':
      return deleteScan(req.scanId, store).then(() => null);
    case 'rename-result':
      return renameResult(req.resultId, req.name, store);
    case 'delete-result':
      return deleteResult(req.resultId, store).then(() => null);
    case 'delete-model':
      return deleteModel(req.modelId, store).then(() => null);
    case 'scan-overview':
      return scanOverview(store, req.scanId);
    case 'volume-plane':
      return readVolumePlane(req.volume.owner, req.volume.id, await volumeInfo(store, req.volume), req.plane, req.index, store);
    case 'volume-file': {
      const info = await volumeInfo(store, req.volume);
      // NRRD float32 mu in the LPS frame: each slab's rows from anterior to posterior (volume-nrrd.ts).
      const { nx, ny } = info.grid;
      return volumeFileBlob(req.volume.owner, req.volume.id, info, volumeNrrdHeader({ ...info, quantity: 'mu' }), (slab) => rowsToLps(slab, nx, ny), store);
    }
  }
}

/** True for the ops libraryOp answers. */
export function isLibraryRequest(req: { op: string }): req is LibraryRequest {
  return ['rename-scan', 'set-geometry', 'delete-scan', 'rename-result', 'delete-result', 'delete-model', 'scan-overview', 'volume-plane', 'volume-file'].includes(req.op);
}

/** The buffers of a reply to transfer rather than copy (the overview's sinogram row and reference pixels). */
export function replyTransfer(value: unknown): ArrayBuffer[] {
  if (value instanceof Float32Array) return [value.buffer as ArrayBuffer];
  const o = value as Partial<ScanOverview> | null;
  if (!o || !(o.sinogram instanceof Float32Array)) return [];
  const out = [o.sinogram.buffer as ArrayBuffer];
  if (o.reference && o.reference.data.buffer !== o.sinogram.buffer) out.push(o.reference.data.buffer as ArrayBuffer);
  return out;
}
