// rimfill prior-check: how far a prior image (a user's network run on the scan, or an image
// file) agrees with the scan's measured data, per view and channel and as one figure.
import { consistencyJson, consistencyReport, DEFAULT_FLAG_WIDTH_MM, type ConsistencyReport } from '../../core/consistency/consistency-report';
import { writeResidualNrrd } from '../../core/consistency/residual-nrrd';
import { InputError } from '../../core/errors';
import { writeImageNrrd } from '../../core/formats/image-nrrd';
import { chooseGrid } from '../../core/recipe/grid';
import { parseArgs, positiveNumber, type ParsedArgs } from '../args';
import { openWorkspace } from '../engine-node';
import { checkOutputs, PendingWrites, replacedWarnings } from '../io';
import { loadScanWithReport, SCAN_INPUT_HELP, SCAN_INPUT_OPTIONS } from '../load';
import { PRIOR_OPTIONS, resolvePrior } from '../prior-source';
import { progressLine } from '../progress';
import type { CommandResult } from './types';

export const priorCheckHelp = `rimfill prior-check scan.nrrd (--model net.onnx --model-info net.json | --prior image.nrrd)
    [--size N --pixel mm] [--out prior.nrrd] [--residual residual.nrrd] [--flag-width mm]
    [--flag-floor p] [--workers N] [--json]
${SCAN_INPUT_HELP}
  Checks a prior against the measured data: reprojects it onto the scan's channels and reports,
  per view and channel, where it disagrees (relative RMS residual ||A f - p|| / ||p||; rays whose
  residual, averaged over --flag-width mm (default ${DEFAULT_FLAG_WIDTH_MM}), exceeds max(5 robust sigma of
  the rays with similar measured values, --flag-floor)). With --model the network runs on the scan (CPU) and --out writes its prior on
  the reconstruction grid (--size/--pixel, default as reconstruct). --residual writes the
  residual sinogram (layout of the scan).`;

function text(r: ConsistencyReport, source: string, written: string[]): string {
  const s = r.summary;
  const worst = Array.from(r.profiles.viewRms.keys()).sort((a, b) => r.profiles.viewRms[b] - r.profiles.viewRms[a]).slice(0, 5);
  return [
    `prior: ${source}`,
    `consistency: relative RMS residual ${(100 * s.relativeRms).toFixed(2)}% on ${s.rays} measured rays (RMS ${s.rmsResidual.toFixed(4)}, mean ${s.meanResidual.toFixed(4)})`,
    `disagreeing rays: ${s.flaggedRays} (${(100 * s.flaggedFraction).toFixed(2)}%) in ${s.flaggedViews} of ${r.views} views, threshold ${s.threshold.toFixed(4)} to ${s.thresholdMax.toFixed(4)} over ${s.averagedChannels} channels (5 robust sigma among rays of similar measured value)`,
    `views with the largest RMS residual: ${worst.map((v) => `${v} (${r.profiles.viewRms[v].toFixed(4)})`).join(', ')}`,
    ...written.map((w) => `wrote ${w}`),
  ].join('\n');
}

function gridOption(a: ParsedArgs): { size: number; pixel: number } | undefined {
  const { size, pixel } = a.options;
  if (size === undefined && pixel === undefined) return undefined;
  if (size === undefined || pixel === undefined) throw new InputError('options --size and --pixel go together (pixels and mm per pixel)');
  if (!Number.isInteger(size) || (size as number) < 8 || (size as number) > 4096) throw new InputError(`option --size: got ${size}, expected a whole number from 8 to 4096`);
  return { size: size as number, pixel: positiveNumber(a, 'pixel')! };
}

export async function priorCheck(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, {
    ...PRIOR_OPTIONS, out: 'string', residual: 'string', size: 'int', pixel: 'number', 'flag-width': 'number', 'flag-floor': 'number',
    workers: 'int', json: 'flag', ...SCAN_INPUT_OPTIONS,
  }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('prior-check: give the scan file, e.g. rimfill prior-check scan.nrrd --model net.onnx --model-info net.json');
  if (a.options.out !== undefined && a.options.model === undefined) throw new InputError('option --out: writes the network prior, so it needs --model (an image given with --prior is already a file)');
  checkOutputs([['out', a.options.out as string | undefined], ['residual', a.options.residual as string | undefined]]);
  const { scan, warnings: readWarnings } = await loadScanWithReport(path, a);
  const grid = chooseGrid(scan, gridOption(a));
  const ws = await openWorkspace(a.options.workers as number | undefined);
  try {
    const t0 = performance.now();
    const progress = a.options.json ? undefined : progressLine('prior-check');
    const src = await resolvePrior(a, ws, scan, grid, { onProgress: progress && ((f, s) => progress(0.6 * f, s)) });
    // The network's output is checked on its own grid (no resampling between it and the data).
    const checked = src.network?.output ?? src.prior;
    const report = await consistencyReport(ws, scan, checked, { onProgress: progress && ((f, s) => progress(0.6 + 0.4 * f, s)) }, {
      flagWidthMm: a.options['flag-width'] as number | undefined,
      flagFloor: a.options['flag-floor'] as number | undefined,
    });
    const writes = new PendingWrites();
    const written: string[] = [];
    if (a.options.out !== undefined) {
      writes.add(a.options.out as string, await writeImageNrrd(src.prior));
      written.push(`${a.options.out} (network prior, ${grid.nx} x ${grid.ny} pixels of ${grid.dx} mm)`);
    }
    if (a.options.residual !== undefined) {
      writes.add(a.options.residual as string, await writeResidualNrrd(scan, report));
      written.push(`${a.options.residual} (residual sinogram)`);
    }
    const replaced = replacedWarnings(writes.commit());
    const seconds = (performance.now() - t0) / 1000;
    const warnings = [...readWarnings, ...src.warnings, ...report.warnings, ...replaced];
    const source = src.network ? `network ${a.options.model}${src.model?.name ? ` (${src.model.name})` : ''}` : `image ${a.options.prior}`;
    return {
      json: {
        source: src.network ? 'network' : 'image',
        model: src.model,
        network: src.network && { ...src.network.report },
        checkedGrid: checked.grid,
        out: a.options.out,
        residual: a.options.residual,
        consistency: consistencyJson(report),
        seconds,
        warnings,
      },
      text: text(report, source, written),
      warnings,
    };
  } finally {
    ws.dispose();
  }
}
