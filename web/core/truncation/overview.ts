// The truncation overview of a stored or loaded scan, the same for `rimfill inspect` and the
// page: a 2D scan is analysed as it is; a cone-beam scan by its detector row nearest the orbit
// plane (centralRow, which follows a vertical detector offset), analysed as a fan-beam scan.
// Left/right truncation is the same in every row of a circular scan to within the cone's
// divergence.
import { suggestedOutline, type SuggestedOutline } from '../completion/suggested-outline';
import type { Scan } from '../scan';
import type { Geometry } from '../geometry/types';
import { centralRow, rowGeometry, rowScan } from './central-row';
import { detectTruncation, type TruncationReport } from './detect';
import { analyseEdges } from './edges';
import { recommendCorrection, type CorrectionAdvice } from './recommend';

export interface TruncationOverview {
  /** The analysed detector row of a cone-beam scan; undefined for 2D scans. */
  row: number | undefined;
  /** The analysed sinogram, [view][channel] (the scan's own data for a 2D scan). */
  sinogram: Float32Array;
  report: TruncationReport;
  /** The correction the report suggests (the page's recipe default, inspect's last line). */
  advice: CorrectionAdvice;
  /** The outline the views' edges suggest (the analysed row of a cone-beam scan), for the user to compare and correct; null when the views do not go round the object. */
  suggestedOutline: SuggestedOutline | null;
}

/** The analysed row (cone beam) and its truncation report. */
export function truncationOverview(scan: Scan): TruncationOverview {
  if (scan.geometry.kind !== 'cone') {
    const report = detectTruncation(scan);
    return { row: undefined, sinogram: scan.data, report, advice: recommendCorrection(report.summary), suggestedOutline: suggestedOutline(analyseEdges(scan)) };
  }
  const row = centralRow(scan.geometry);
  return rowOverview(scan.geometry, row, rowScan(scan, row).data, scan.muWater);
}

/** The overview of a cone-beam scan from its analysed row alone (views x channels), as stored. */
export function rowOverview(g: Geometry, row: number, sinogram: Float32Array, muWater?: number): TruncationOverview {
  const analysed: Scan = { geometry: rowGeometry(g), data: sinogram, muWater };
  const report = detectTruncation(analysed);
  return { row, sinogram, report, advice: recommendCorrection(report.summary), suggestedOutline: suggestedOutline(analyseEdges(analysed)) };
}
