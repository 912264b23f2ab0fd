// rimfill compare for volumes: the reference volume, the FOV cylinder from the options or the
// files, and the text tables (regions, and with --per-slice every axial slice).
import { compareVolumes, type VolumeComparison } from '../../core/compare-volume';
import { InputError } from '../../core/errors';
import type { Volume } from '../../core/volume';
import type { ParsedArgs } from '../args';

function pad(rows: string[][]): string {
  const w = rows[0].map((_, i) => Math.max(...rows.map((r) => r[i].length)));
  return rows.map((r) => r.map((s, i) => (i ? s.padStart(w[i]) : s.padEnd(w[i]))).join('  ')).join('\n');
}

function regionTable(c: VolumeComparison): string {
  const digits = c.unit === 'HU' ? 1 : 6;
  const rows = [['region', 'voxels', `RMSE (${c.unit})`, 'PSNR (dB)', 'SSIM']];
  for (const [name, f] of Object.entries(c.regions)) {
    if (f) rows.push([name, String(f.pixels), f.rmse.toFixed(digits), f.psnr.toFixed(2), f.ssim.toFixed(4)]);
  }
  const fov = c.fovRadiusMm === null ? '' : `\nFOV cylinder: radius ${c.fovRadiusMm.toFixed(1)} mm${c.fovHalfHeightMm === null ? '' : `, half height ${c.fovHalfHeightMm.toFixed(1)} mm`}`;
  return pad(rows) + fov;
}

function sliceTable(c: VolumeComparison): string {
  const region = c.fovRadiusMm === null ? 'object' : 'insideFov';
  const rows = [['slice', 'z (mm)', `${region} voxels`, `RMSE (${c.unit})`, 'SSIM']];
  for (const s of c.slices ?? []) {
    const f = s.regions[region];
    rows.push([String(s.k), s.z.toFixed(1), String(f?.pixels ?? 0), f ? f.rmse.toFixed(c.unit === 'HU' ? 1 : 6) : '-', f ? f.ssim.toFixed(4) : '-']);
  }
  return pad(rows);
}

/** Compares `volume` with the reference volume read from `refPath` (when given), as the options say. */
export function compareVolumeFiles(a: ParsedArgs, volume: Volume, reference: Volume | undefined, refPath: string | undefined): { comparison?: VolumeComparison; text: string } {
  if (!reference) return { text: '' };
  if (reference.grid.nz === 1) throw new InputError(`reference ${refPath}: got one slice, expected a volume to compare with the ${volume.grid.nz}-slice volume`);
  let fovRadius = a.options['fov-radius'] as number | undefined;
  let fovHalfHeight = a.options['fov-half-height'] as number | undefined;
  if (a.options.fov || fovRadius !== undefined || fovHalfHeight !== undefined) {
    fovRadius ??= volume.fovRadius ?? reference.fovRadius;
    fovHalfHeight ??= volume.fovHalfHeight ?? reference.fovHalfHeight;
    if (fovRadius === undefined) throw new InputError('option --fov: neither volume records the field of view; give --fov-radius mm');
  }
  for (const [k, v] of [['fov-radius', fovRadius], ['fov-half-height', fovHalfHeight]] as const) {
    if (v !== undefined && !(v > 0)) throw new InputError(`option --${k}: got ${v}, expected a positive length in mm`);
  }
  const comparison = compareVolumes(volume, reference, { fovRadius, fovHalfHeight, perSlice: !!a.options['per-slice'] });
  return { comparison, text: [regionTable(comparison), a.options['per-slice'] ? sliceTable(comparison) : ''].filter(Boolean).join('\n') };
}
