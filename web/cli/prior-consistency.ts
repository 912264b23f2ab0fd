// `rimfill reconstruct --method prior`: how far the prior and the result agree with the
// measured data (consistency reports, web/core/consistency), for --json and the summary line.
// The prior is checked as given (a network's output on its own grid, an image on its own);
// the result on the reconstruction grid.
import { consistencyJson, consistencyReport, type ConsistencyReport } from '../core/consistency/consistency-report';
import type { Workspace } from '../core/engine/workspace';
import type { Image2D } from '../core/image';
import type { RunHooks } from '../core/run-hooks';
import type { Scan } from '../core/scan';

export interface PriorConsistency {
  /** JSON: { prior?: report, result: report }. */
  json: Record<string, unknown>;
  /** "consistency with the measured data: prior 2.29% (6718 rays disagree), result 0.99% (140)". */
  text: string;
  warnings: string[];
}

const figure = (r: ConsistencyReport) => `${(100 * r.summary.relativeRms).toFixed(2)}% (${r.summary.flaggedRays} rays disagree)`;

/** Consistency reports of the prior (when the run had one as an image) and of the result. */
export async function priorConsistency(ws: Workspace, scan: Scan, prior: Image2D | undefined, result: Image2D, hooks: RunHooks = {}): Promise<PriorConsistency> {
  const before = prior ? await consistencyReport(ws, scan, prior, hooks) : undefined;
  const after = await consistencyReport(ws, scan, result, hooks);
  return {
    json: { ...(before ? { prior: { grid: prior!.grid, ...consistencyJson(before) } } : {}), result: consistencyJson(after) },
    text: `consistency with the measured data: ${before ? `prior ${figure(before)}, ` : ''}result ${figure(after)}`,
    warnings: [...(before?.warnings ?? []), ...after.warnings],
  };
}
