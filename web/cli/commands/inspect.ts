// rimfill inspect: where is a scan truncated?
import { InputError } from '../../core/errors';
import { fovRadius } from '../../core/geometry/view-vectors';
import { detectTruncation } from '../../core/truncation/detect';
import { parseArgs } from '../args';
import { loadScanWithReport, SCAN_INPUT_HELP, SCAN_INPUT_OPTIONS } from '../load';
import type { CommandResult } from './types';

export const inspectHelp = `rimfill inspect <scan file or folder> [--json]
${SCAN_INPUT_HELP}
  Reports, per view and per detector side, whether the projection is cut off, and a summary.`;

export async function inspect(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, { ...SCAN_INPUT_OPTIONS, json: 'flag' }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('inspect: give the scan file, e.g. rimfill inspect scan.nrrd');
  const { scan, warnings } = await loadScanWithReport(path, a);
  const r = detectTruncation(scan);
  const g = scan.geometry;
  const pct = (x: number) => `${(100 * x).toFixed(1)}%`;
  const text = [
    `${g.kind} beam, ${g.detector.shape} detector, ${g.detector.channels} channels, ${r.views.length} views`,
    `measured field of view: radius ${fovRadius(g).toFixed(1)} mm`,
    `truncated views: ${pct(r.truncatedFraction)} (left edge ${pct(r.leftFraction)}, right edge ${pct(r.rightFraction)})`,
    `edge threshold ${r.threshold.toPrecision(3)} (noise sigma ${r.noiseSigma.toPrecision(3)})`,
  ].join('\n');
  return { json: { geometry: g, fovRadiusMm: fovRadius(g), ...r }, text, warnings };
}
