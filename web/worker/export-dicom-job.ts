// A stored result (image, or a cone-beam result's volume) exported as a DICOM CT series, in the
// coordinator worker so the page's main thread never encodes: values in HU with the result's
// mu_water, the result's name (its recipe label) as the series description. One slice gives one
// .dcm file; a volume gives a ZIP (stored, not compressed; npm "fflate") of one file per slice
// in a folder. The bytes travel back as a Blob, which the page hands to the download.
import { zipSync } from 'fflate';
import { InputError } from '../core/errors';
import { writeDicomSeries } from '../core/formats/dicom-write';
import type { ImageVolume } from '../core/formats/volume';
import { muToHu } from '../core/image';
import { describeResult } from '../core/recipe/describe-result';
import type { RunHooks } from '../core/run-hooks';
import { volumeOrigin } from '../core/volume';
import type { UseStore } from '../store/db';
import { getResultMeta, loadResultImage, loadResultVolume } from '../store/results';

export interface DicomExportOutcome {
  /** One .dcm file, or a ZIP of a folder of them. */
  blob: Blob;
  kind: 'dcm' | 'zip';
  /** The result's name, for the file name. */
  name: string;
  slices: number;
  rescale: { slope: number; intercept: number };
  warnings: string[];
}

/** The stored result as an image volume in HU (one slice for 2D results), with what the user must know about its values. */
async function resultInHu(resultId: string, store: UseStore): Promise<{ name: string; derivation: string; volume: ImageVolume; notes?: string[] }> {
  const meta = await getResultMeta(resultId, store);
  // A run's knowledge at length; a result added from a file is known by its name.
  const derivation = meta.recipe.method === 'imported' ? meta.name : describeResult(meta.recipe).detail;
  const mw = meta.muWater;
  if (!(mw && mw > 0)) throw new InputError(`result "${meta.name}": mu_water is unknown, so its values cannot be written in HU; set it for the scan (HU calibration) first`);
  if (meta.volume) {
    const { volume } = await loadResultVolume(resultId, store);
    const g = volume.grid;
    const { x0, y0, z0 } = volumeOrigin(g);
    return { name: meta.name, derivation, volume: { nx: g.nx, ny: g.ny, nz: g.nz, spacing: [g.dx, g.dy, g.dz], origin: [x0, y0, z0], data: muToHu(volume.data, mw), quantity: 'hu', format: 'result' } };
  }
  const { image, undetermined } = await loadResultImage(resultId, store);
  const g = image.grid;
  const origin: [number, number, number] = [g.cx - ((g.nx - 1) / 2) * g.dx, g.cy - ((g.ny - 1) / 2) * g.dy, 0];
  const unset = undetermined?.reduce((a, v) => a + v, 0);
  const notes = unset ? [`${unset} pixels are not determined by this result (DBP) and hold air (-1000 HU) as a fill, not a measurement: DICOM has no mark for them; export the not-determined mask (NRRD) beside it`] : [];
  return { name: meta.name, derivation, notes, volume: { nx: g.nx, ny: g.ny, nz: 1, spacing: [g.dx, g.dy, 1], origin, data: muToHu(image.data, mw), quantity: 'hu', format: 'result' } };
}

/** A folder name of safe characters. */
function folderName(name: string): string {
  return name.normalize('NFKD').replace(/[^\w.-]+/g, '-').replace(/-+/g, '-').replace(/^-|-$/g, '').slice(0, 60) || 'rimfill-dicom';
}

export async function exportDicomJob(store: UseStore, resultId: string, hooks: RunHooks = {}): Promise<DicomExportOutcome> {
  hooks.onProgress?.(0, 'reading the result');
  const { name, derivation, volume, notes = [] } = await resultInHu(resultId, store);
  hooks.onProgress?.(0.3, 'encoding DICOM');
  const series = writeDicomSeries({ volume, description: name, derivation });
  const common = { name, slices: series.files.length, rescale: series.rescale, warnings: [...notes, ...series.warnings] };
  if (series.files.length === 1) return { ...common, kind: 'dcm', blob: new Blob([series.files[0].bytes as BlobPart], { type: 'application/dicom' }) };
  hooks.onProgress?.(0.8, 'packing the series');
  const folder = folderName(name);
  const zip = zipSync(Object.fromEntries(series.files.map((f) => [`${folder}/${f.name}`, f.bytes])), { level: 0 });
  return { ...common, kind: 'zip', blob: new Blob([zip as BlobPart], { type: 'application/zip' }) };
}
