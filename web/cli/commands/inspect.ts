// rimfill inspect: where is a scan truncated?
import { InputError } from '../../core/errors';
import { coneFovHalfHeight } from '../../core/geometry/cone';
import { fovRadius } from '../../core/geometry/view-vectors';
import { detectTruncation } from '../../core/truncation/detect';
import { parseArgs } from '../args';
import { loadScan } from '../load';
import type { CommandResult } from './types';

export const inspectHelp = `rimfill inspect scan.nrrd [--geometry geom.json] [--json]
  Reports, per view and per detector side, whether the projection is cut off, and a summary.`;

export async function inspect(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, { geometry: 'string', json: 'flag' }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('inspect: give the scan file, e.g. rimfill inspect scan.nrrd');
  const scan = await loadScan(path, a.options.geometry as string | undefined);
  const r = detectTruncation(scan);
  const g = scan.geometry;
  const pct = (x: number) => `${(100 * x).toFixed(1)}%`;
  // Cone beams: the report covers every detector row of every view.
  const cone = g.kind === 'cone';
  const text = [
    `${g.kind} beam, ${g.detector.shape} detector, ${g.detector.channels} channels${cone ? ` x ${g.detector.rows} rows` : ''}, ${r.views.length / g.detector.rows} views`,
    `measured field of view: radius ${fovRadius(g).toFixed(1)} mm${cone ? `, half height ${coneFovHalfHeight(g).toFixed(1)} mm on the axis` : ''}`,
    `truncated ${cone ? 'detector rows' : 'views'}: ${pct(r.truncatedFraction)} (left edge ${pct(r.leftFraction)}, right edge ${pct(r.rightFraction)})`,
    `edge threshold ${r.threshold.toPrecision(3)} (noise sigma ${r.noiseSigma.toPrecision(3)})`,
  ].join('\n');
  return { json: { geometry: g, fovRadiusMm: fovRadius(g), ...r }, text };
}
