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

/** Splits a report into the description part and the per-ray arrays. */
export function storedConsistency(r: ConsistencyReport, checkedGrid: ImageGrid): { meta: StoredConsistency; rays: { residual: Float32Array; flagged: Uint8Array } } {
  const p = r.profiles;
  return {
    meta: {
      views: r.views, channels: r.channels, summary: r.summary, checkedGrid, warnings: r.warnings,
      viewRms: p.viewRms, viewRelative: p.viewRelative, viewMaxAbs: p.viewMaxAbs, viewFlagged: p.viewFlagged, channelRms: p.channelRms,
    },
    rays: { residual: r.residual, flagged: p.flagged },
  };
}

/** A stored report rebuilt as the ConsistencyReport the views draw. */
export function asReport(meta: StoredConsistency, rays: { residual: Float32Array; flagged: Uint8Array }): ConsistencyReport {
  return {
    views: meta.views,
    channels: meta.channels,
    residual: rays.residual,
    summary: meta.summary,
    profiles: { flagged: rays.flagged, viewRms: meta.viewRms, viewRelative: meta.viewRelative, viewMaxAbs: meta.viewMaxAbs, viewFlagged: meta.viewFlagged, channelRms: meta.channelRms },
    warnings: meta.warnings,
  };
}

/** The consistency report stored with a result (undefined when the result has none). */
export async function loadConsistency(resultId: string, store: UseStore = pageStore()): Promise<{ report: ConsistencyReport; checkedGrid: ImageGrid } | undefined> {
  const [m, d] = await getMany([keys.result(resultId), keys.resultData(resultId)], store);
  const meta = checkRecord<ResultMeta>(m, 'result', keys.result(resultId));
  if (!meta.consistency) return undefined;
  const data = checkRecord<ResultData>(d, 'result-data', keys.resultData(resultId));
  if (!data.consistency) throw new RecordError(`stored record ${keys.resultData(resultId)}: the consistency report's residual sinogram is missing`);
  return { report: asReport(meta.consistency, data.consistency), checkedGrid: meta.consistency.checkedGrid };
}
