// Messages between the page's facade (client.ts) and the coordinator worker. Requests carry an
// id (so no request names a field "id" of its own); the coordinator answers with progress
// messages and then exactly one done or error.
// Bulk data never travels here: files go over as File objects, arrays stay in IndexedDB; the
// page gets only what it draws (a scan's analysed sinogram row, images), transferred, and
// exported files come back as Blobs for the download.
import type { Comparison } from '../core/compare';
import type { NewJob } from '../store/jobs';
import type { JobRecord, ModelMeta, ResultMeta, ScanMeta } from '../store/records';
import type { CalibrationOutcome, CalibrationRequest } from './calibrate-job';
import type { DicomExportOutcome } from './export-dicom-job';
import type { LibraryReplies, LibraryRequest } from './library-ops';
import type { NetworkPriorOutcome, NetworkPriorRequest } from './network-prior-job';
import type { PriorCheckOutcome, PriorCheckRequest } from './prior-check-job';
import type { PackedOrtRuntime } from './ort-runtime-pack';
import type { KnowledgeRequest } from './knowledge-ops';

export const APP_PROTOCOL_VERSION = 8;

export type { CalibrationRequest, KnowledgeRequest, LibraryRequest, NetworkPriorRequest, PriorCheckRequest };
export type { ScanOverview, StoredVolumeRef } from './library-ops';
export type { VolumePlane } from '../store/volume-planes';

/** What a comparison measures against: the scan's reference image or another result. */
export type CompareTarget = { kind: 'reference' } | { kind: 'result'; id: string };

export type AppRequest =
  | { op: 'import'; files: File[]; name?: string; reduce?: unknown }
  | { op: 'demo' }
  | { op: 'demo-cone' }
  | { op: 'run'; scanId: string; recipe: unknown; name?: string; jobId?: string; budget?: number }
  | { op: 'queue-add'; job: NewJob }
  | { op: 'queue-settle'; jobId: string; state: 'failed' | 'cancelled'; error?: string }
  | { op: 'queue-requeue'; jobId: string; session: string }
  | { op: 'queue-forget'; ids: string[] }
  | { op: 'compare'; resultId: string; against: CompareTarget }
  | { op: 'info' }
  | { op: 'import-image'; scanId: string; files: File[]; slice?: number }
  | { op: 'calibrate'; request: CalibrationRequest }
  | { op: 'import-model'; files: File[] }
  | { op: 'network-prior'; request: NetworkPriorRequest }
  | { op: 'prior-check'; request: PriorCheckRequest }
  | { op: 'export-dicom'; resultId: string }
  | { op: 'knowledge'; request: KnowledgeRequest }
  | LibraryRequest;

/** What each request resolves to. */
export interface AppReplies extends LibraryReplies {
  import: ScanMeta;
  demo: ScanMeta;
  'demo-cone': ScanMeta;
  run: ResultMeta;
  'queue-add': JobRecord;
  'queue-settle': null;
  'queue-requeue': null;
  'queue-forget': null;
  compare: Comparison;
  info: EngineInfo;
  'import-image': ResultMeta;
  calibrate: CalibrationOutcome;
  'import-model': ModelMeta;
  'network-prior': NetworkPriorOutcome;
  'prior-check': PriorCheckOutcome;
  'export-dicom': DicomExportOutcome;
  /** The scan with its knowledge as stored. */
  knowledge: ScanMeta;
}

export interface EngineInfo {
  /** Kernel workers in the pool. */
  workers: number;
  /** True when the workers share one memory (cross-origin isolated page). */
  sharedMemory: boolean;
}

/** Messages to the coordinator. */
export type ToCoordinator =
  | { op: 'init'; version: number; kernelPorts: MessagePort[]; ortRuntime: PackedOrtRuntime }
  | ({ id: number } & AppRequest)
  | { op: 'cancel'; id: number };

/** A failure, with the error's class name so the page can tell bad input from a fault. */
export interface WireError {
  name: string;
  message: string;
  /** Extra fields (StorageFullError.largest). */
  details?: unknown;
}

/** Messages from the coordinator. */
export type FromCoordinator =
  | { id: number; type: 'progress'; fraction: number; stage: string }
  | { id: number; type: 'done'; value: unknown }
  | { id: number; type: 'error'; error: WireError };
