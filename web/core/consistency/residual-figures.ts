// The data-residual figures every stored result carries (core/data-residual.ts), read off a
// consistency report instead of re-projecting the image a second time: both are A f - p over
// the scan's measured rays.
import type { DataResidual } from '../data-residual';
import type { ConsistencyReport } from './consistency-report';

/** The DataResidual of the image a consistency report checked. */
export function dataResidualOf(r: ConsistencyReport): DataResidual {
  const { viewRms, viewMaxAbs } = r.profiles;
  let worstView = 0, worstViewRms = 0, maxAbs = 0;
  for (let v = 0; v < r.views; v++) {
    if (viewRms[v] > worstViewRms) [worstView, worstViewRms] = [v, viewRms[v]];
    maxAbs = Math.max(maxAbs, viewMaxAbs[v]);
  }
  const s = r.summary;
  return { rays: s.rays, rms: s.rmsResidual, relative: s.relativeRms, bias: s.meanResidual, maxAbs, worstView, worstViewRms, perViewRms: Array.from(viewRms) };
}
