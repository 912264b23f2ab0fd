// rimfill simulate for cone-beam geometries: exact projections of a built-in 3D phantom, or
// forward projections of a volume file, optionally truncated along the channels and with
// photon noise; --truth writes the phantom as a volume.
import { InputError } from '../../core/errors';
import { coneFovHalfHeight } from '../../core/geometry/cone';
import { cropDetector } from '../../core/geometry/presets';
import type { Geometry } from '../../core/geometry/types';
import { fovRadius } from '../../core/geometry/view-vectors';
import { writeScanNrrd } from '../../core/formats/scan-nrrd';
import { writeVolumeNrrd } from '../../core/formats/volume-nrrd';
import { namedSolidPhantom, SOLID_PHANTOM_NAMES } from '../../core/phantoms/solid-phantoms';
import { voxelize } from '../../core/phantoms/solid';
import { Projector3d } from '../../core/recon/projector3d';
import type { Scan } from '../../core/scan';
import { analyticConeProjections } from '../../core/simulate/analytic-cone';
import { addPhotonNoise } from '../../core/simulate/noise';
import { checkVolumeGrid, type Volume } from '../../core/volume';
import { positiveNumber, requireString, type ParsedArgs } from '../args';
import { PendingWrites } from '../io';
import { loadVolume } from '../load';
import { openWorkspace } from '../engine-node';
import { progressLine } from '../progress';
import type { CommandResult } from './types';

/** Keeps channels [first, first + n) of every row. */
function cropRows(data: Float32Array, nFull: number, first: number, n: number): Float32Array {
  const rows = data.length / nFull;
  const out = new Float32Array(rows * n);
  for (let r = 0; r < rows; r++) out.set(data.subarray(r * nFull + first, r * nFull + first + n), r * n);
  return out;
}

async function projectVolume(truth: Volume, g: Geometry, workers?: number): Promise<Float32Array> {
  const ws = await openWorkspace(workers);
  try {
    const proj = await Projector3d.create(ws, truth.grid, g);
    const vol = ws.alloc('phantom', truth.data.length);
    const out = ws.alloc('projections', proj.projectionLength);
    await ws.write(vol, truth.data);
    await proj.forward(vol, out);
    return await ws.read(out);
  } finally {
    ws.dispose();
  }
}

/** The cone-beam branch of `rimfill simulate` (options already parsed by simulate.ts). */
export async function simulateCone(a: ParsedArgs, full: Geometry): Promise<CommandResult> {
  const out = requireString(a, 'out');
  const phantomArg = requireString(a, 'phantom');
  const photons = positiveNumber(a, 'photons');
  const seed = (a.options.seed as number | undefined) ?? 1;
  const subsamples = (a.options.subsamples as number | undefined) ?? 1;
  if (!Number.isInteger(subsamples) || subsamples < 1 || subsamples > 4) throw new InputError(`option --subsamples: got ${subsamples}, expected 1 to 4 for a cone-beam scan (s x s rays per cell)`);
  const channels = a.options.channels as number | undefined;
  const crop = channels !== undefined || a.options.offset !== undefined
    ? cropDetector(full, channels ?? full.detector.channels, (a.options.offset as number | undefined) ?? 0)
    : undefined;
  const scanGeometry = crop?.geometry ?? full;

  const { data, truth, muWater, readWarnings } = await coneProjections(a, phantomArg, full, scanGeometry, subsamples);
  let zeroCounts = 0;
  if (photons) zeroCounts = addPhotonNoise(data, photons, seed).zeroCounts;

  const notes: Record<string, string> = { phantom: phantomArg, ...(photons ? { photons: String(photons), seed: String(seed) } : {}) };
  const completeScan: Scan = { geometry: full, data, muWater, notes };
  const scan: Scan = crop
    ? { geometry: crop.geometry, data: cropRows(data, full.detector.channels, crop.first, crop.geometry.detector.channels), muWater, notes: { ...notes, truncatedFrom: `${full.detector.channels} channels` } }
    : completeScan;
  const writes = new PendingWrites();
  writes.add(out, await writeScanNrrd(scan));
  if (a.options.complete) writes.add(a.options.complete as string, await writeScanNrrd(completeScan));
  if (a.options.truth && truth) {
    writes.add(a.options.truth as string, await writeVolumeNrrd({ ...truth, fovRadius: fovRadius(scanGeometry), fovHalfHeight: coneFovHalfHeight(scanGeometry) }));
  }
  writes.commit();
  const d = scanGeometry.detector;
  const summary = {
    out,
    views: data.length / (full.detector.channels * d.rows),
    channels: d.channels,
    rows: d.rows,
    fovRadiusMm: fovRadius(scanGeometry),
    fovHalfHeightMm: coneFovHalfHeight(scanGeometry),
    photons: photons ?? null,
    zeroCountReadings: zeroCounts,
  };
  const warnings = [...readWarnings, ...(zeroCounts > 0 ? [`${zeroCounts} readings had no photons and were clamped to 1 count`] : [])];
  return {
    json: summary,
    text: `wrote ${out}: ${summary.views} views x ${d.rows} rows x ${d.channels} channels, FOV radius ${summary.fovRadiusMm.toFixed(1)} mm, half height ${summary.fovHalfHeightMm.toFixed(1)} mm`,
    warnings,
  };
}

/** Projections of a named 3D phantom (exact) or a volume file (Joseph projector), and the truth volume when one is written. */
async function coneProjections(a: ParsedArgs, phantomArg: string, full: Geometry, scanGeometry: Geometry, subsamples: number): Promise<{ data: Float32Array; truth: Volume | undefined; muWater: number | undefined; readWarnings: string[] }> {
  if (!(SOLID_PHANTOM_NAMES as readonly string[]).includes(phantomArg)) {
    // A volume file or folder (NRRD, MetaImage, raw + JSON, DICOM series, TIFF), forward projected.
    const loaded = await loadVolume(phantomArg, 'phantom', a.options['mu-water'] as number | undefined, a);
    const truth = loaded.volume;
    return { data: await projectVolume(truth, full, a.options.workers as number | undefined), truth, muWater: truth.muWater, readWarnings: loaded.warnings };
  }
  const p = namedSolidPhantom(phantomArg);
  const data = await analyticConeProjections(p, full, subsamples, { onProgress: a.options.json ? undefined : progressLine('simulate') });
  if (!a.options.truth) return { data, truth: undefined, muWater: p.muWater, readWarnings: [] };
  const pixel = positiveNumber(a, 'pixel', 1)!;
  const size = (a.options.size as number | undefined) ?? Math.ceil((2 * p.radius) / pixel / 4) * 4 + 8;
  const h = coneFovHalfHeight(scanGeometry);
  const height = h > 0 ? Math.min(2 * p.halfHeight + 2 * pixel, 2.2 * h) : 2 * p.halfHeight + 2 * pixel;
  const nz = (a.options.slices as number | undefined) ?? Math.max(1, Math.ceil(height / pixel));
  const grid = checkVolumeGrid({ nx: size, ny: size, nz, dx: pixel, dy: pixel, dz: pixel, cx: 0, cy: 0, cz: 0 });
  return { data, truth: { grid, data: voxelize(p, grid, 3), quantity: 'mu', muWater: p.muWater }, muWater: p.muWater, readWarnings: [] };
}
