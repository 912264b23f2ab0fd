// The residual sinogram as an NRRD file laid out like the scan (sizes <channels> 1 <views>),
// with the scan's geometry, so any viewer of scans can show where a prior disagrees.
import { writeNrrd } from '../formats/nrrd';
import type { Scan } from '../scan';
import type { ConsistencyReport } from './consistency-report';

/** Writes (A prior - measured) per view and channel; NaN where the measured value was not finite. */
export function writeResidualNrrd(scan: Scan, report: ConsistencyReport): Promise<Uint8Array> {
  const keys: Record<string, string> = {
    'rimfill.geometry': JSON.stringify(scan.geometry),
    'rimfill.quantity': 'residual-line-integral',
    'rimfill.relativeRms': String(report.summary.relativeRms),
  };
  return writeNrrd(report.residual, [report.channels, 1, report.views], { kinds: 'space space list', labels: '"channel" "row" "view"' }, keys, false);
}
