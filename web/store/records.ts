// Records kept in IndexedDB. Every record carries `schema` and `kind`; a reader checks both, so
// data written by another version is upgraded or refused with a reason, never misread.
// Metadata and bulk arrays live under separate keys: listing reads only the small records.
import type { DataResidual } from '../core/data-residual';
import type { Comparison } from '../core/compare';
import type { VolumeComparison } from '../core/compare-volume';
import type { Geometry } from '../core/geometry/types';
import type { ImageGrid } from '../core/image';
import type { KnownRegion, Outline } from '../core/knowledge';
import type { Ring } from '../core/knowledge/mask-contour';
import type { ModelInfo } from '../core/model/description';
import type { ModelSignature } from '../core/model/signature';
import type { Reduction } from '../core/reduction';
import type { StoredConsistency } from './consistency';
import type { StoredVolumeInfo, VolumeSlab } from './volumes';

/**
 * Version of the record layout this build writes. Schema 1 kept a scan's projections in one
 * record (ScanData.projections); schema 2 keeps them in chunks of views (projection-chunk) with
 * a preview row (scan-preview). Every other record is the same in both, and this build reads
 * both (a schema-1 scan is read from its one record).
 */
export const SCHEMA_VERSION = 2;

/** Oldest record layout this build still reads. */
export const OLDEST_SCHEMA = 1;

/** Record layouts this build reads. */
export type Schema = 1 | 2;

/** Where a scan came from. */
export type ScanSource = { type: 'file'; fileNames: string[] } | { type: 'demo'; description: string };

/** How a scan's mu_water was set in the page (absent: it came with the data or the simulation). */
export type ScanCalibration =
  | { method: 'hand'; at: number }
  | {
      method: 'region'; at: number; resultId: string; resultName: string;
      /** The marked circle, mm. */
      region: { cx: number; cy: number; radius: number };
      /** HU of the marked material (0 for water). */
      materialHu: number;
      pixels: number;
      /** Standard deviation in the region, HU. */
      stdHu: number;
    };

/** A stored scan's description (small; listed without loading projections). */
export interface ScanMeta {
  schema: Schema;
  kind: 'scan';
  id: string;
  name: string;
  /** Milliseconds since 1970. */
  createdAt: number;
  geometry: Geometry;
  /** mu of water, 1/mm, when known. */
  muWater?: number;
  /** How muWater was set in the page, when it was. */
  calibration?: ScanCalibration;
  notes?: Record<string, string>;
  source: ScanSource;
  /** Bytes of projections plus reference image. */
  bytes: number;
  /** True when a reference image (ground truth) is stored with the scan. */
  hasReference: boolean;
  /** Cone-beam scans: the reference volume, stored in slabs (volumes.ts); `reference` is then its central slice. */
  referenceVolume?: StoredVolumeInfo;
  /** Things the reader noticed about the data (e.g. negative line integrals). */
  warnings: string[];
  /** Schema 2: the projections in chunks of views (absent: schema 1, in ScanData). */
  projections?: StoredProjections;
  /** Binning or cropping applied on import, and the size of the data before it. */
  reduction?: { applied: Reduction; from: { channels: number; rows: number; views: number } };
  /** What the user knows about the object (known regions, the outline), set only by the knowledge op (worker/knowledge-ops.ts). */
  knowledge?: ScanKnowledge;
}

/** How a scan's projections are stored: `chunks` records of `viewsPerChunk` views (the last may hold fewer). */
export interface StoredProjections {
  viewsPerChunk: number;
  chunks: number;
}

/** Views [v0, v0 + views) of a scan's line integrals, [view][row][channel]. */
export interface ProjectionChunk {
  schema: Schema;
  kind: 'projection-chunk';
  owner: string;
  index: number;
  v0: number;
  views: number;
  data: Float32Array;
}

/** One detector row of every view (the row nearest the orbit plane): what the page draws as the sinogram. */
export interface ScanPreview {
  schema: Schema;
  kind: 'scan-preview';
  id: string;
  row: number;
  /** views x channels line integrals. */
  data: Float32Array;
}

/**
 * Knowledge a user keeps with a scan in the page: known regions and the outline (plain JSON, as
 * recipes carry them: core/knowledge/types.ts), each with where it came from, and the masks they
 * name (pixels under keys.maskData). A mask lives as long as a region or the outline names it.
 */
export interface ScanKnowledge {
  regions: StoredRegion[];
  outline?: StoredOutline;
  masks: StoredMask[];
}

export interface StoredRegion {
  id: string;
  region: KnownRegion;
  /** Where it came from, in words ("drawn on “FBP, water cylinder, …”", "mask file liver.nrrd"). */
  source: string;
}

export interface StoredOutline {
  outline: Outline;
  /** Where it came from, in words ("drawn", "typed", "threshold at -500 HU of …"). */
  source: string;
}

/** A mask kept with a scan: its name (what recipes call it), grid and boundary for drawing. */
export interface StoredMask {
  id: string;
  name: string;
  /** One slice; a cone-beam recipe applies it to every slice. */
  grid: ImageGrid;
  /** Pixels inside. */
  pixels: number;
  /** Its boundary (mm), to draw over images without loading the mask. */
  contour: Ring[];
  source: string;
}

/** A mask's pixels (1 inside, x fastest). */
export interface MaskData {
  schema: typeof SCHEMA_VERSION;
  kind: 'mask-data';
  id: string;
  data: Uint8Array;
}

/** A reference image stored with a scan (mu, 1/mm). */
export interface StoredImage {
  grid: ImageGrid;
  data: Float32Array;
  muWater?: number;
  fovRadius?: number;
}

/** A stored scan's projections and optional reference image. */
export interface ScanData {
  schema: Schema;
  kind: 'scan-data';
  id: string;
  /** Schema 1 only: line integrals, [view][row][channel] (schema 2: projection-chunk records). */
  projections?: Float32Array;
  reference?: StoredImage;
}

/** A finished reconstruction's description. */
export interface ResultMeta {
  schema: Schema;
  kind: 'result';
  id: string;
  scanId: string;
  name: string;
  createdAt: number;
  /** The validated recipe, as run. */
  recipe: Record<string, unknown>;
  grid: ImageGrid;
  muWater?: number;
  fovRadius?: number;
  warnings: string[];
  /** Method-specific figures (timings, convergence history). */
  report: Record<string, unknown>;
  /** Comparison with the scan's reference image, when it has one. */
  metrics: Comparison | null;
  /** The image re-projected onto the measured channels against the measured data (absent in records stored before it was computed). */
  residual?: DataResidual | null;
  /** Wall-clock seconds of the run. */
  seconds: number;
  bytes: number;
  /** Cone-beam results: the volume, stored in slabs (volumes.ts); the image is its central slice. */
  volume?: StoredVolumeInfo;
  /** Comparison of the volume with the scan's reference volume (FOV cylinder), when it has one. */
  volumeMetrics?: VolumeComparison | null;
  /** Consistency report of the image against the measured data (network prior runs; its residual sinogram is in ResultData). */
  consistency?: StoredConsistency;
}

/** A finished reconstruction's pixels (mu, 1/mm, x fastest). */
export interface ResultData {
  schema: Schema;
  kind: 'result-data';
  id: string;
  data: Float32Array;
  /**
   * With ResultMeta.consistency: (A f - p) and the flagged rays, [view][channel]; the share of
   * flagged rays through each pixel of the checked image (absent when no ray was flagged).
   */
  consistency?: { residual: Float32Array; flagged: Uint8Array; map?: Float32Array };
  /**
   * Methods that reconstruct only part of the grid (DBP): 1 where the pixel is not determined
   * by the data and the knowledge (its value is a fill, not a measurement), x fastest. Absent in
   * records of other methods and in DBP results stored before the mask was kept.
   */
  undetermined?: Uint8Array;
}

/** Page settings. */
export interface Settings {
  schema: Schema;
  kind: 'settings';
  /** The demo scan was created once; it is not re-created after the user deletes it. */
  demoCreated: boolean;
}

/** A user's network (ONNX) with its rimfill-model/1 description, checked on import. */
export interface ModelMeta {
  schema: Schema;
  kind: 'model';
  id: string;
  name: string;
  createdAt: number;
  /** The validated description (defaults filled). */
  info: ModelInfo;
  /** Inputs and outputs as the runtime read them from the model. */
  signature: ModelSignature;
  fileNames: { model: string; description: string };
  /** Bytes of the ONNX file. */
  bytes: number;
  /** What the import check could not settle (e.g. shapes known only at run time). */
  warnings: string[];
}

/** A stored network's ONNX bytes and the description as the user wrote it. */
export interface ModelData {
  schema: Schema;
  kind: 'model-data';
  id: string;
  onnx: Uint8Array;
  description: string;
}

/** Where a queued reconstruction stands. */
export type JobState = 'waiting' | 'running' | 'done' | 'failed' | 'cancelled';

/**
 * A reconstruction in the page's queue, kept so that a reload or a closed tab loses none: one
 * that was waiting or running when its page went away shows as interrupted, with its recipe.
 */
export interface JobRecord {
  schema: Schema;
  kind: 'job';
  id: string;
  /** The page (tab and load) that queued it; while that page lives, its unfinished jobs are its own. */
  session: string;
  scanId: string;
  /** The scan's name when it was queued (the scan may be deleted since). */
  scanName: string;
  /** The result's label (core/recipe/label.ts). */
  name: string;
  /** The recipe to run (validated when it runs). */
  recipe: Record<string, unknown>;
  state: JobState;
  /** Milliseconds since 1970. */
  createdAt: number;
  updatedAt: number;
  /** Done: the stored result and the run's seconds; failed: why. */
  resultId?: string;
  seconds?: number;
  error?: string;
}

export type StoredRecord = ScanMeta | ScanData | ResultMeta | ResultData | Settings | VolumeSlab | ModelMeta | ModelData | ProjectionChunk | ScanPreview | JobRecord | MaskData;

export const keys = {
  scan: (id: string) => `scan/${id}`,
  scanData: (id: string) => `scan-data/${id}`,
  scanPreview: (id: string) => `scan-preview/${id}`,
  /** Prefix of a scan's projection chunks (projections.ts names each chunk). */
  scanChunks: (id: string) => `scan-proj/${id}/`,
  result: (id: string) => `result/${id}`,
  resultData: (id: string) => `result-data/${id}`,
  settings: 'settings',
  model: (id: string) => `model/${id}`,
  modelData: (id: string) => `model-data/${id}`,
  job: (id: string) => `job/${id}`,
  /** A mask kept with a scan (its prefix `mask-data/<scan>/` holds all of the scan's masks). */
  maskData: (scanId: string, maskId: string) => `mask-data/${scanId}/${maskId}`,
};

/** Thrown when a stored record cannot be read by this build. */
export class RecordError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'RecordError';
  }
}

/**
 * Checks a record read from storage: the kind expected and a schema this build reads.
 * Upgrades of older schemas go here when the layout changes.
 */
export function checkRecord<T extends StoredRecord>(value: unknown, kind: T['kind'], key: string): T {
  if (typeof value !== 'object' || value === null) throw new RecordError(`stored record ${key}: missing or not an object`);
  const r = value as { schema?: unknown; kind?: unknown };
  if (r.kind !== kind) throw new RecordError(`stored record ${key}: kind "${String(r.kind)}", expected "${kind}"`);
  if (typeof r.schema !== 'number' || r.schema < OLDEST_SCHEMA || r.schema > SCHEMA_VERSION || !Number.isInteger(r.schema)) {
    const newer = typeof r.schema === 'number' && r.schema > SCHEMA_VERSION;
    throw new RecordError(
      `stored record ${key}: schema ${String(r.schema)}, this page reads ${OLDEST_SCHEMA} to ${SCHEMA_VERSION}` +
        (newer ? ' (written by a newer version of Rimfill: open it with that version)' : ''),
    );
  }
  return value as T;
}
