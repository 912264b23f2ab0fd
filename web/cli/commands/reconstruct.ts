// rimfill reconstruct: a scan file in, an image file out.
import { InputError } from '../../core/errors';
import { writeImageNrrd } from '../../core/formats/image-nrrd';
import { rowsToLps } from '../../core/formats/volume';
import { volumeNrrdHeader, writeVolumeNrrd } from '../../core/formats/volume-nrrd';
import type { Workspace } from '../../core/engine/workspace';
import { checkMemoryBudget } from '../../core/memory-budget';
import { readWholeScan } from '../../core/projection-source';
import type { Recipe } from '../../core/recipe/recipe';
import { describeReduction, isIdentity } from '../../core/reduction';
import type { RunHooks } from '../../core/run-hooks';
import type { VolumeInfo } from '../../core/volume-sink';
import { availableParallelism, freemem } from 'node:os';
import { muToHu } from '../../core/image';
import { METHODS, usesKnowledge, validateRecipe } from '../../core/recipe/recipe';
import { FILTER_WINDOWS } from '../../core/recon/filter-design';
import { RECIPE_EXTENDS } from '../../core/truncation/extend-methods';
import { describeResult } from '../../core/recipe/describe-result';
import type { KnowledgeReport } from '../../core/recipe/knowledge-report';
import { addKnowledgeFields, KNOWLEDGE_HELP, KNOWLEDGE_OPTIONS, knowledgeLines, knowledgeMasks } from '../knowledge-options';
import { runRecipe } from '../../core/recipe/run';
import { methodAndCorrection } from '../../core/recipe/label';
import { addIterativeFields, ITERATIVE_FIELD_OPTIONS, ITERATIVE_HELP, ITERATIVE_OPTIONS, iterationSummary, iterativeInputs } from '../iterative-options';
import { parseArgs, requireString, type ParsedArgs } from '../args';
import { checkOutputs, PendingWrites, replacedWarnings, StreamedFile } from '../io';
import { priorConsistency } from '../prior-consistency';
import { memoryLimit, openScanInput, SCAN_INPUT_HELP, SCAN_INPUT_OPTIONS, type ScanInput } from '../load';
import { openWorkspace } from '../engine-node';
import { progressLine } from '../progress';
import type { CommandResult } from './types';
import { checkDbpOptions, DBP_HELP, DBP_OPTIONS } from '../dbp-options';
import { writeUndeterminedNrrd } from '../../core/dbp/undetermined-nrrd';

export const reconstructHelp = `rimfill reconstruct <scan file or folder> --method ${METHODS.join('|')} --out image.nrrd
    [--extend ${RECIPE_EXTENDS.join('|')}] [--filter ${FILTER_WINDOWS.join('|')}]
    [--band-limit lp/cm] [--size N] [--pixel mm] [--slices N --slice-spacing mm] [--hu] [--workers N] [--json]
${SCAN_INPUT_HELP}
  Reconstructs a 2D scan onto an N x N grid of --pixel mm centred on the isocentre (default:
  512 pixels covering the measured field of view or, when larger, the object as estimated from
  the truncated edges). --extend extends the detector before filtering to correct truncation:
  edge (constant + roll-off), mirror (Ohnesorge 2000), water (Hsieh 2004), cosine (taper), each
  as far as the object is estimated to reach. --filter windows the ramp filter, sharpest
  first (default ramp); --band-limit ends the window at that spatial frequency, in line pairs
  per cm at the isocentre (default: the detector's Nyquist frequency there, the full band).
  --hu writes HU (needs mu_water in the scan).
  A cone-beam scan gives a volume (FDK for --method fbp): N x N voxels (default 256 across the
  field of view or the estimated object) and --slices slices of --slice-spacing mm (default:
  cubic voxels covering the measured height); --extend works row by row on cone-beam scans, and
  the iterative methods reconstruct the volume with the 3D projector (6-neighbour TV).
${KNOWLEDGE_HELP}
${ITERATIVE_HELP}
${DBP_HELP}`;

/** Recipe fields and the options that set them, so errors speak of what the user typed. */
const FIELD_OPTIONS: Record<string, string> = {
  method: 'method', filter: 'filter', bandLimit: 'band-limit', extend: 'extend', 'grid.size': 'size', 'grid.pixel': 'pixel',
  'volume.slices': 'slices', 'volume.spacing': 'slice-spacing',
  ...Object.fromEntries(Object.entries(ITERATIVE_FIELD_OPTIONS).map(([option, field]) => [field, option])),
  nonNegative: 'allow-negative',
};

function asOptionError(err: unknown): unknown {
  if (!(err instanceof InputError)) return err;
  const m = /^recipe ([\w.]+): (.*)$/s.exec(err.message);
  const option = m && FIELD_OPTIONS[m[1]];
  return option ? new InputError(`option --${option}: ${m[2]}`) : err;
}

/** The recipe the options describe (validated). */
export function recipeFromArgs(a: ParsedArgs): ReturnType<typeof validateRecipe> {
  const o = a.options;
  const raw: Record<string, unknown> = { method: requireString(a, 'method') };
  checkDbpOptions(a, raw.method as string);
  if (o.filter !== undefined) raw.filter = o.filter;
  if (o['band-limit'] !== undefined) raw.bandLimit = o['band-limit'];
  if (o.extend !== undefined) raw.extend = o.extend;
  if (o.size !== undefined || o.pixel !== undefined) {
    if (o.size === undefined || o.pixel === undefined) throw new InputError('options --size and --pixel go together (pixels and mm per pixel)');
    raw.grid = { size: o.size, pixel: o.pixel };
  }
  if (o.slices !== undefined || o['slice-spacing'] !== undefined) {
    if (o.slices === undefined || o['slice-spacing'] === undefined) throw new InputError('options --slices and --slice-spacing go together (slices and mm between them)');
    raw.volume = { slices: o.slices, spacing: o['slice-spacing'] };
  }
  addIterativeFields(raw, a);
  addKnowledgeFields(raw, a);
  try {
    return validateRecipe(raw);
  } catch (err) {
    throw asOptionError(err);
  }
}

export async function reconstruct(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, {
    method: 'string', out: 'string', filter: 'string', 'band-limit': 'number', extend: 'string', size: 'int', pixel: 'number',
    hu: 'flag', workers: 'int', json: 'flag', slices: 'int', 'slice-spacing': 'number', ...SCAN_INPUT_OPTIONS, ...ITERATIVE_OPTIONS, ...KNOWLEDGE_OPTIONS, ...DBP_OPTIONS,
  }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('reconstruct: give the scan file, e.g. rimfill reconstruct scan.nrrd --method fbp --out image.nrrd');
  const out = requireString(a, 'out');
  const recipe = recipeFromArgs(a);
  const maskOut = a.options.undetermined as string | undefined;
  checkOutputs([['out', out], ['undetermined', maskOut]]);
  const input = await openScanInput(path, a);
  const g = input.source.geometry;
  if (a.options.hu && !input.source.muWater) throw new InputError('option --hu: the scan has no mu_water (rimfill.muWater); give --mu-water or write mu');
  if (recipe.volume && g.kind !== 'cone') throw new InputError(`options --slices and --slice-spacing: only for cone-beam scans (this scan is ${g.kind} beam)`);
  const workers = a.options.workers as number | undefined;
  const budget = memoryLimit(a) ?? process.availableMemory?.() ?? freemem();
  const estimate = checkMemoryBudget(g, recipe, { workers: workers ?? Math.max(1, availableParallelism()), sharedMemory: true, scanInMemory: !input.streamed }, budget,
    memoryLimit(a) !== undefined ? '--memory-limit' : 'the memory this computer has free');
  const ws = await openWorkspace(workers);
  try {
    const t0 = performance.now();
    const hooks = { onProgress: a.options.json ? undefined : progressLine(recipe.method) };
    const facts = {
      ...(isIdentity(input.reduction) ? {} : { reduction: { applied: input.reduction, description: describeReduction(input.reduction), from: input.from } }),
      memory: { estimateMb: Math.round(estimate.bytes / 2 ** 20), budgetMb: Math.round(budget / 2 ** 20) },
    };
    // FDK streams into the file; with known regions or the outline it holds the scan (and masks) like the other methods.
    if (g.kind === 'cone' && recipe.method === 'fbp' && !usesKnowledge(recipe)) return await fdkToFile(ws, input, recipe, out, a, hooks, t0, facts);
    const scan = await readWholeScan(input.source);
    const readWarnings = input.warnings();
    const { inputs, warnings: priorWarnings, priorReport, checkedPrior } = await iterativeInputs(recipe, a, ws, scan, hooks);
    readWarnings.push(...priorWarnings);
    const masks = await knowledgeMasks(recipe, scan);
    if (masks) inputs.masks = masks;
    if (estimate.pixelWeightFloats !== undefined) inputs.pixelWeightFloats = estimate.pixelWeightFloats;
    const r = await runRecipe(ws, scan, recipe, hooks, inputs);
    const knowledge = r.report.knowledge as KnowledgeReport | undefined;
    const knowledgeText = knowledge ? `\n${knowledgeLines(knowledge, recipe.extend === 'outline' ? 'water' : recipe.extend ?? 'none').join('\n')}` : '';
    if (priorReport) r.report.priorSource = priorReport;
    // The prior-guided method: the prior and the result checked against the measured data.
    const consistency = recipe.method === 'prior' && !r.volume ? await priorConsistency(ws, scan, checkedPrior, r.image, hooks) : undefined;
    const seconds = (performance.now() - t0) / 1000;
    const description = describeResult(recipe as unknown as Record<string, unknown>).detail;
    const image = { ...r.image, description };
    const writes = new PendingWrites();
    if (r.volume) {
      const v = r.volume;
      writes.add(out, await writeVolumeNrrd(a.options.hu ? { ...v, data: muToHu(v.data, scan.muWater!), quantity: 'hu', description } : { ...v, description }));
      readWarnings.push(...replacedWarnings(writes.commit()));
      return volumeResult(out, recipe, v, seconds, r.report, r.warnings, readWarnings, facts, knowledgeText);
    }
    const written = a.options.hu ? { ...image, data: muToHu(image.data, scan.muWater!), quantity: 'hu' as const } : image;
    writes.add(out, await writeImageNrrd(written));
    if (maskOut && r.undetermined) writes.add(maskOut, await writeUndeterminedNrrd(image.grid, r.undetermined));
    readWarnings.push(...replacedWarnings(writes.commit()));
    const grid = image.grid;
    return {
      json: { out, ...(maskOut ? { undetermined: maskOut } : {}), recipe, grid, fovRadiusMm: image.fovRadius, seconds, report: r.report, ...facts, ...(consistency ? { consistency: consistency.json } : {}), warnings: r.warnings },
      text: `wrote ${out}: ${grid.nx} x ${grid.ny} pixels of ${grid.dx.toFixed(3)} mm, ${methodAndCorrection(recipe as unknown as Record<string, unknown>)} in ${seconds.toFixed(2)} s${iterationSummary(r.report)}${knowledgeText}` +
        (consistency ? `\n${consistency.text}` : ''),
      warnings: [...readWarnings, ...r.warnings, ...(consistency?.warnings ?? [])],
    };
  } finally {
    ws.dispose();
  }
}

/**
 * FDK of a cone-beam scan straight into the output file: the projections stream from the input
 * a chunk of views at a time and the volume is written slab by slab as it leaves the engine.
 */
async function fdkToFile(
  ws: Workspace, input: ScanInput, recipe: Recipe, out: string, a: ParsedArgs, hooks: RunHooks, t0: number, facts: Record<string, unknown>,
): Promise<CommandResult> {
  const muWater = input.source.muWater;
  const description = describeResult(recipe as unknown as Record<string, unknown>).detail;
  const file = new StreamedFile(out);
  let info: VolumeInfo | undefined;
  try {
    const r = await runRecipe(ws, input.source, recipe, hooks, {}, {
      sink: (v) => {
        info = { ...v, description, ...(a.options.hu ? { quantity: 'hu' as const } : {}) };
        file.write(volumeNrrdHeader(info));
        const { nx, ny } = v.grid;
        return {
          write: async (_k0, slab) => {
            // Rows from anterior to posterior, as the header's LPS frame says.
            const values = rowsToLps(a.options.hu ? muToHu(slab, muWater!) : slab, nx, ny);
            file.write(new Uint8Array(values.buffer, values.byteOffset, values.byteLength));
          },
        };
      },
    });
    const replaced = replacedWarnings(file.commit());
    const seconds = (performance.now() - t0) / 1000;
    return volumeResult(out, recipe, info!, seconds, r.report, r.warnings, [...input.warnings(), ...replaced], facts);
  } catch (err) {
    file.discard();
    throw err;
  }
}

/** The command's answer for a volume written to `out`. */
function volumeResult(
  out: string, recipe: Recipe, v: VolumeInfo, seconds: number, report: Record<string, unknown>, warnings: string[], readWarnings: string[], facts: Record<string, unknown>,
  knowledgeText = '',
): CommandResult {
  const vg = v.grid;
  const reduction = facts.reduction as { description: string } | undefined;
  return {
    json: { out, recipe, grid: vg, fovRadiusMm: v.fovRadius, fovHalfHeightMm: v.fovHalfHeight, seconds, report, ...facts, warnings },
    text: `wrote ${out}: ${vg.nx} x ${vg.ny} x ${vg.nz} voxels of ${vg.dx.toFixed(3)} x ${vg.dy.toFixed(3)} x ${vg.dz.toFixed(3)} mm, ${methodAndCorrection(recipe as unknown as Record<string, unknown>).replace(/^FBP/, 'FDK')}${reduction ? ` from the scan with ${reduction.description}` : ''} in ${seconds.toFixed(2)} s${iterationSummary(report)}${knowledgeText}`,
    warnings: [...readWarnings, ...warnings],
  };
}
