// rimfill reconstruct: a scan file in, an image file out.
import { InputError } from '../../core/errors';
import { writeImageNrrd } from '../../core/formats/image-nrrd';
import { writeVolumeNrrd } from '../../core/formats/volume-nrrd';
import { muToHu } from '../../core/image';
import { METHODS, validateRecipe } from '../../core/recipe/recipe';
import { runRecipe } from '../../core/recipe/run';
import { parseArgs, requireString, type ParsedArgs } from '../args';
import { PendingWrites } from '../io';
import { loadScan } from '../load';
import { openWorkspace } from '../engine-node';
import { progressLine } from '../progress';
import type { CommandResult } from './types';

export const reconstructHelp = `rimfill reconstruct scan.nrrd --method ${METHODS.join('|')} --out image.nrrd
    [--filter ram-lak|shepp-logan|cosine|hamming|hann] [--cutoff 0..1] [--size N] [--pixel mm]
    [--slices N --slice-spacing mm] [--hu] [--geometry geom.json] [--workers N] [--json]
  Reconstructs a 2D scan onto an N x N grid of --pixel mm centred on the isocentre (default:
  512 pixels covering the measured field of view). --hu writes HU (needs mu_water in the scan).
  A cone-beam scan gives a volume (FDK for --method fbp): N x N voxels (default 256 across the
  field of view) and --slices slices of --slice-spacing mm (default: cubic voxels covering the
  measured height).`;

/** The recipe the options describe (validated). */
export function recipeFromArgs(a: ParsedArgs): ReturnType<typeof validateRecipe> {
  const o = a.options;
  const raw: Record<string, unknown> = { method: requireString(a, 'method') };
  if (o.filter !== undefined) raw.filter = o.filter;
  if (o.cutoff !== undefined) raw.cutoff = o.cutoff;
  if (o.size !== undefined || o.pixel !== undefined) {
    if (o.size === undefined || o.pixel === undefined) throw new InputError('options --size and --pixel go together (pixels and mm per pixel)');
    raw.grid = { size: o.size, pixel: o.pixel };
  }
  if (o.slices !== undefined || o['slice-spacing'] !== undefined) {
    if (o.slices === undefined || o['slice-spacing'] === undefined) throw new InputError('options --slices and --slice-spacing go together (slices and mm between them)');
    raw.volume = { slices: o.slices, spacing: o['slice-spacing'] };
  }
  return validateRecipe(raw);
}

export async function reconstruct(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, {
    method: 'string', out: 'string', filter: 'string', cutoff: 'number', size: 'int', pixel: 'number',
    hu: 'flag', geometry: 'string', workers: 'int', json: 'flag', slices: 'int', 'slice-spacing': 'number',
  }, 1);
  const path = a.positional[0];
  if (!path) throw new InputError('reconstruct: give the scan file, e.g. rimfill reconstruct scan.nrrd --method fbp --out image.nrrd');
  const recipe = recipeFromArgs(a);
  const out = requireString(a, 'out');
  const scan = await loadScan(path, a.options.geometry as string | undefined);
  if (a.options.hu && !scan.muWater) throw new InputError('option --hu: the scan has no mu_water (rimfill.muWater); write mu instead');
  if (recipe.volume && scan.geometry.kind !== 'cone') throw new InputError(`options --slices and --slice-spacing: only for cone-beam scans (this scan is ${scan.geometry.kind} beam)`);
  const ws = await openWorkspace(a.options.workers as number | undefined);
  try {
    const t0 = performance.now();
    const r = await runRecipe(ws, scan, recipe, { onProgress: a.options.json ? undefined : progressLine(recipe.method) });
    const seconds = (performance.now() - t0) / 1000;
    const image = r.image;
    const writes = new PendingWrites();
    if (r.volume) {
      const v = r.volume;
      writes.add(out, await writeVolumeNrrd(a.options.hu ? { ...v, data: muToHu(v.data, scan.muWater!), quantity: 'hu' } : v));
      writes.commit();
      const vg = v.grid;
      return {
        json: { out, recipe, grid: vg, fovRadiusMm: v.fovRadius, fovHalfHeightMm: v.fovHalfHeight, seconds, report: r.report, warnings: r.warnings },
        text: `wrote ${out}: ${vg.nx} x ${vg.ny} x ${vg.nz} voxels of ${vg.dx.toFixed(3)} x ${vg.dy.toFixed(3)} x ${vg.dz.toFixed(3)} mm, FDK in ${seconds.toFixed(2)} s`,
        warnings: r.warnings,
      };
    }
    const written = a.options.hu ? { ...image, data: muToHu(image.data, scan.muWater!), quantity: 'hu' as const } : image;
    writes.add(out, await writeImageNrrd(written));
    writes.commit();
    const g = image.grid;
    return {
      json: { out, recipe, grid: g, fovRadiusMm: image.fovRadius, seconds, report: r.report, warnings: r.warnings },
      text: `wrote ${out}: ${g.nx} x ${g.ny} pixels of ${g.dx.toFixed(3)} mm, ${recipe.method} in ${seconds.toFixed(2)} s`,
      warnings: r.warnings,
    };
  } finally {
    ws.dispose();
  }
}
