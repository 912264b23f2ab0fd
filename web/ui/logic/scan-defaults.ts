// What the Reconstruct tab starts from for a scan: the correction its truncation report suggests
// and the grid a recipe without one gets (the same one the command line picks), from core
// functions so that page and CLI agree. The report is the coordinator's (truncationOverview).
import type { Geometry } from '../../core/geometry/types';
import { chooseGrid } from '../../core/recipe/grid';
import { chooseVolumeGrid } from '../../core/recipe/volume-grid';
import type { Scan } from '../../core/scan';
import type { TruncationReport } from '../../core/truncation/detect';
import { recommendCorrection, type CorrectionAdvice } from '../../core/truncation/recommend';

export interface ScanDefaults {
  advice: CorrectionAdvice;
  /** The default grid in words, e.g. "512 px × 1.29 mm" (or "…, 120 slices" for a volume). */
  gridText: string;
}

const trim = (v: number) => String(Number(v.toPrecision(3)));

/** The default grid in words, from the scan's estimated object radius (as chooseGrid / chooseVolumeGrid compute it). */
export function defaultGridText(geometry: Geometry, objectRadiusMm: number): string {
  const scan: Scan = { geometry, data: new Float32Array(0) };
  if (geometry.kind === 'cone') {
    const v = chooseVolumeGrid(scan, undefined, undefined, objectRadiusMm);
    return `${v.nx} px × ${trim(v.dx)} mm, ${v.nz} slices`;
  }
  const g = chooseGrid(scan, undefined, objectRadiusMm);
  return `${g.nx} px × ${trim(g.dx)} mm`;
}

/** The suggested correction and default grid of a scan with this geometry and truncation report. */
export function scanDefaults(geometry: Geometry, report: TruncationReport): ScanDefaults {
  return { advice: recommendCorrection(report.summary), gridText: defaultGridText(geometry, report.summary.objectRadiusMm) };
}
