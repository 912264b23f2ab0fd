// A consistency report kept with a result: its figures and per-view series in the result's
// description (listed cheaply), its residual sinogram and flagged rays with the pixels.
import { getMany, type UseStore } from 'idb-keyval';
import type { ConsistencyReport } from '../core/consistency/consistency-report';
import type { ResidualSummary } from '../core/consistency/residual-stats';
import type { ImageGrid } from '../core/image';
import { pageStore } from './db';
import { checkRecord, keys, RecordError, type ResultData, type ResultMeta } from './records';

/** The stored form of a ConsistencyReport without its per-ray arrays. */
export interface StoredConsistency {
  views: number;
  channels: number;
  summary: ResidualSummary;
  viewRms: Float32Array;
  viewRelative: Float32Array;
  viewMaxAbs: Float32Array;
  viewFlagged: Int32Array;
  channelRms: Float32Array;
  /** Grid of the image that was re-projected (a network output is checked on its own grid). */
  checkedGrid: ImageGrid;
  warnings: string[];
}

/** The arrays of a stored report: per ray, and the disagreement map on the checked grid. */
export interface ConsistencyArrays {
  residual: Float32Array;
  flagged: Uint8Array;
  map?: Float32Array;
}

/** Splits a report into the description part and the arrays (`map`: disagreementMap on the checked grid). */
export function storedConsistency(r: ConsistencyReport, checkedGrid: ImageGrid, map?: Float32Array): { meta: StoredConsistency; arrays: ConsistencyArrays } {
  const p = r.profiles;
  return {
    meta: {
      views: r.views, channels: r.channels, summary: r.summary, checkedGrid, warnings: r.warnings,
      viewRms: p.viewRms, viewRelative: p.viewRelative, viewMaxAbs: p.viewMaxAbs, viewFlagged: p.viewFlagged, channelRms: p.channelRms,
    },
    arrays: { residual: r.residual, flagged: p.flagged, ...(map ? { map } : {}) },
  };
}

/** A stored report rebuilt as the ConsistencyReport the views draw. */
export function asReport(meta: StoredConsistency, rays: ConsistencyArrays): ConsistencyReport {
  return {
    views: meta.views,
    channels: meta.channels,
    residual: rays.residual,
    summary: meta.summary,
    profiles: { flagged: rays.flagged, viewRms: meta.viewRms, viewRelative: meta.viewRelative, viewMaxAbs: meta.viewMaxAbs, viewFlagged: meta.viewFlagged, channelRms: meta.channelRms },
    warnings: meta.warnings,
  };
}

/** A stored consistency report with the grid it was checked on and its disagreement map. */
export interface LoadedConsistency {
  report: ConsistencyReport;
  checkedGrid: ImageGrid;
  /** Share of flagged rays through each pixel of checkedGrid (absent when no ray was flagged). */
  map?: Float32Array;
}

/** The consistency report stored with a result (undefined when the result has none). */
export async function loadConsistency(resultId: string, store: UseStore = pageStore()): Promise<LoadedConsistency | undefined> {
  const [m, d] = await getMany([keys.result(resultId), keys.resultData(resultId)], store);
  const meta = checkRecord<ResultMeta>(m, 'result', keys.result(resultId));
  if (!meta.consistency) return undefined;
  const data = checkRecord<ResultData>(d, 'result-data', keys.resultData(resultId));
  if (!data.consistency) throw new RecordError(`stored record ${keys.resultData(resultId)}: the consistency report's residual sinogram is missing`);
  return { report: asReport(meta.consistency, data.consistency), checkedGrid: meta.consistency.checkedGrid, map: data.consistency.map };
}
