// rimfill inspect: where and how badly is a scan truncated?
import { InputError } from '../../core/errors';
import { coneFovHalfHeight } from '../../core/geometry/cone';
import { fovRadius } from '../../core/geometry/view-vectors';
import { truncationOverview } from '../../core/truncation/overview';
import type { TruncationReport } from '../../core/truncation/detect';
import type { CorrectionAdvice } from '../../core/truncation/recommend';
import { parseArgs } from '../args';
import { loadScanWithReport, SCAN_INPUT_HELP, SCAN_INPUT_OPTIONS } from '../load';
import type { CommandResult } from './types';

export const inspectHelp = `rimfill inspect <scan file or folder> [--views] [--json]
${SCAN_INPUT_HELP}
  Reports, per view and per detector side, whether the projection is cut off (edge value
  against a noise-aware threshold), the edge value and outward slope, how far the object
  reaches beyond the edge (water cylinder fit, smoothed across views), the mass each view
  misses (mass consistency), a summary, and the correction it suggests for reconstruct
  (--extend) with the reason. --views lists every view; --json gives it all.
  --mu-water sets mu of water for the fits when the scan records none.`;

const pct = (x: number) => `${(100 * x).toFixed(1)}%`;
const mm = (x: number) => `${x.toFixed(1)} mm`;

function summaryLines(r: TruncationReport, advice: CorrectionAdvice): string[] {
  const s = r.summary;
  const lines = [
    `truncated views: ${pct(s.truncatedFraction)} (left edge ${pct(s.leftFraction)}, right edge ${pct(s.rightFraction)}); worst side: ${s.worstSide}`,
  ];
  if (s.worstSide !== 'none') {
    lines.push(`object reach beyond the edge: left mean ${mm(s.meanExtentMm.left)} (max ${mm(s.maxExtentMm.left)}), right mean ${mm(s.meanExtentMm.right)} (max ${mm(s.maxExtentMm.right)})`);
  }
  lines.push(`estimated object: diameter ${mm(s.objectDiameterMm)}, radius about the isocentre ${mm(s.objectRadiusMm)}; FOV diameter ${mm(s.fovDiameterMm)} (object / FOV ${(s.objectDiameterMm / s.fovDiameterMm).toFixed(2)})`);
  const m = r.mass;
  if ('unavailable' in m) lines.push(`mass consistency: ${m.unavailable}`);
  else {
    const form = m.form === 'parallel' ? 'parallel views' : 'fan views rebinned to parallel';
    const total = m.basis === 'complete-views'
      ? `object mass ${m.totalMass.toPrecision(5)} mm from ${m.completeViews} complete views (spread ${m.spread === null ? 'n/a' : pct(m.spread)})`
      : `object mass at least ${m.totalMass.toPrecision(5)} mm (no complete view: a lower bound)`;
    lines.push(`mass consistency (${form}): ${total}; cut-off views miss up to ${pct(m.maxMissingFraction)} (mean ${pct(m.meanMissingFraction)})`);
  }
  lines.push(`edge threshold ${r.threshold.toPrecision(3)} (noise sigma ${r.noiseSigma.toPrecision(3)}); water fits with mu ${r.muWater} /mm${r.muAssumed ? ' (assumed: the scan records no mu_water)' : ''}`);
  lines.push(`suggested correction: ${advice.label} (--extend ${advice.extend}): ${advice.reason}`);
  return lines;
}

function viewLines(r: TruncationReport): string[] {
  const head = 'view  left: cut value  slope/mm  reach mm | right: cut value  slope/mm  reach mm | missing mass';
  const side = (e: TruncationReport['views'][number]['left']) =>
    `${e.truncated ? 'yes' : ' no'} ${e.value.toFixed(4).padStart(7)} ${e.slope.toFixed(4).padStart(9)} ${e.extentMm.toFixed(1).padStart(8)}`;
  return [head, ...r.views.map((v) => `${String(v.view).padStart(4)}  ${side(v.left)} | ${side(v.right)} | ${v.missingMass === undefined ? 'n/a' : v.missingMass.toPrecision(4)}`)];
}

export async function inspect(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, { ...SCAN_INPUT_OPTIONS, views: 'flag', json: 'flag' }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('inspect: give the scan file, e.g. rimfill inspect scan.nrrd');
  const { scan, warnings } = await loadScanWithReport(path, a);
  const g = scan.geometry;
  const cone = g.kind === 'cone';
  // Cone beams: the row nearest the orbit plane, analysed as a fan-beam scan (the page shows the same).
  const { row, report: r, advice } = truncationOverview(scan);
  const text = [
    `${g.kind} beam, ${g.detector.shape} detector, ${g.detector.channels} channels${cone ? ` x ${g.detector.rows} rows (row ${row} analysed, the nearest to the orbit plane)` : ''}, ${r.views.length} views`,
    `measured field of view: radius ${fovRadius(g).toFixed(1)} mm${cone ? `, half height ${coneFovHalfHeight(g).toFixed(1)} mm on the axis` : ''}`,
    ...summaryLines(r, advice),
    ...(a.options.views ? viewLines(r) : []),
  ].join('\n');
  return { json: { geometry: g, fovRadiusMm: fovRadius(g), ...(cone ? { analysedRow: row } : {}), ...r, recommendation: advice }, text, warnings };
}
