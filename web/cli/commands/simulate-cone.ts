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
import { chooseVolumeGrid } from '../../core/recipe/volume-grid';
import { checkVolumeGrid, type Volume, type VolumeGrid } from '../../core/volume';
import { viewCount } from '../../core/geometry/types';
import { positiveNumber, requireString, type ParsedArgs } from '../args';
import { PendingWrites, replacedWarnings, type WrittenFile } from '../io';
import { writtenLines, type PlannedFile } from '../output-report';
import { loadVolume } from '../load';
import { openWorkspace } from '../engine-node';
import { progressLine } from '../progress';
import type { CommandResult } from './types';
import { announceLargeOutput, type SimulateOptions, type SimulateOutputs } from './simulate';

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
export async function simulateCone(a: ParsedArgs, full: Geometry, outputs: SimulateOutputs, options: SimulateOptions): Promise<CommandResult> {
  const { out } = outputs;
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

  const { data, truth: fileTruth, muWater, readWarnings } = await coneProjections(a, phantomArg, full, scanGeometry, subsamples, outputs, options);
  let truth = fileTruth;
  let zeroCounts = 0;
  if (photons) zeroCounts = addPhotonNoise(data, photons, seed).zeroCounts;

  const notes: Record<string, string> = { phantom: phantomArg, ...(photons ? { photons: String(photons), seed: String(seed) } : {}) };
  const completeScan: Scan = { geometry: full, data, muWater, notes };
  const scan: Scan = crop ? { ...cropScan(data, full, crop, muWater), notes: { ...notes, truncatedFrom: `${full.detector.channels} channels` } } : completeScan;
  if (!truth && outputs.truth) {
    // The built-in phantom on the truth volume: by default the one reconstruct picks for this scan (noise included).
    const p = namedSolidPhantom(phantomArg);
    const grid = truthVolumeGrid(a, p, scan);
    truth = { grid, data: voxelize(p, grid, 3), quantity: 'mu', muWater };
  }
  const d = scanGeometry.detector;
  const views = viewCount(full);
  const { written, what } = await writeConeOutputs(outputs, { scan, completeScan, truth });
  const summary = {
    out,
    views,
    channels: d.channels,
    rows: d.rows,
    fovRadiusMm: fovRadius(scanGeometry),
    fovHalfHeightMm: coneFovHalfHeight(scanGeometry),
    photons: photons ?? null,
    zeroCountReadings: zeroCounts,
    files: written.map((w) => ({ path: w.path, bytes: w.bytes, replaced: w.replaced })),
    ...(outputs.truth && truth ? { truthGrid: truth.grid } : {}),
  };
  const warnings = [...readWarnings, ...(zeroCounts > 0 ? [`${zeroCounts} readings had no photons and were clamped to 1 count`] : []), ...replacedWarnings(written)];
  return { json: summary, text: writtenLines(written, what).join('\n'), warnings };
}

/** Writes the scan, and the complete scan and truth when asked for; says what each file holds. */
async function writeConeOutputs(outputs: SimulateOutputs, f: { scan: Scan; completeScan: Scan; truth: Volume | undefined }): Promise<{ written: WrittenFile[]; what: Record<string, string> }> {
  const g = f.scan.geometry, d = g.detector, views = viewCount(g);
  const writes = new PendingWrites();
  const what: Record<string, string> = {};
  writes.add(outputs.out, await writeScanNrrd(f.scan));
  what[outputs.out] = `scan, ${views} views x ${d.rows} rows x ${d.channels} channels, FOV radius ${fovRadius(g).toFixed(1)} mm, half height ${coneFovHalfHeight(g).toFixed(1)} mm`;
  if (outputs.complete) {
    writes.add(outputs.complete, await writeScanNrrd(f.completeScan));
    what[outputs.complete] = `complete scan, ${views} views x ${d.rows} rows x ${f.completeScan.geometry.detector.channels} channels`;
  }
  if (outputs.truth && f.truth) {
    writes.add(outputs.truth, await writeVolumeNrrd({ ...f.truth, fovRadius: fovRadius(g), fovHalfHeight: coneFovHalfHeight(g) }));
    const t = f.truth.grid;
    what[outputs.truth] = `ground truth, ${t.nx} x ${t.ny} x ${t.nz} voxels of ${Number(t.dx.toPrecision(6))} x ${Number(t.dy.toPrecision(6))} x ${Number(t.dz.toPrecision(6))} mm`;
  }
  return { written: writes.commit(), what };
}

/** The scan as cut to its kept channels (or whole). */
function cropScan(data: Float32Array, full: Geometry, crop: ReturnType<typeof cropDetector> | undefined, muWater?: number): Scan {
  if (!crop) return { geometry: full, data, muWater };
  return { geometry: crop.geometry, data: cropRows(data, full.detector.channels, crop.first, crop.geometry.detector.channels), muWater };
}

/**
 * The truth volume: with none of --size, --pixel, --slices the volume reconstruct picks for this
 * scan when given none (compare then needs no resampling); otherwise --size x --size voxels of
 * --pixel mm (default covering the phantom) and --slices slices (default the measured height).
 */
function truthVolumeGrid(a: ParsedArgs, p: { radius: number; halfHeight: number }, scan: Scan, objectRadiusMm?: number): VolumeGrid {
  const o = a.options;
  if (o.size === undefined && o.pixel === undefined && o.slices === undefined) return chooseVolumeGrid(scan, undefined, undefined, objectRadiusMm);
  const pixel = positiveNumber(a, 'pixel', 1)!;
  const size = (o.size as number | undefined) ?? Math.ceil((2 * p.radius) / pixel / 4) * 4 + 8;
  const h = coneFovHalfHeight(scan.geometry);
  const height = h > 0 ? Math.min(2 * p.halfHeight + 2 * pixel, 2.2 * h) : 2 * p.halfHeight + 2 * pixel;
  const nz = (o.slices as number | undefined) ?? Math.max(1, Math.ceil(height / pixel));
  return checkVolumeGrid({ nx: size, ny: size, nz, dx: pixel, dy: pixel, dz: pixel, cx: 0, cy: 0, cz: 0 });
}

/**
 * Projections of a named 3D phantom (exact) or a volume file (Joseph projector, the file being
 * the truth); a write larger than the limit is announced first.
 */
async function coneProjections(
  a: ParsedArgs, phantomArg: string, full: Geometry, scanGeometry: Geometry, subsamples: number, outputs: SimulateOutputs, options: SimulateOptions,
): Promise<{ data: Float32Array; truth: Volume | undefined; muWater: number | undefined; readWarnings: string[] }> {
  const views = viewCount(full), rows = full.detector.rows;
  const planned: PlannedFile[] = [{ path: outputs.out, bytes: views * rows * scanGeometry.detector.channels * 4, smaller: 'a geometry with fewer views, rows or channels' }];
  if (outputs.complete) planned.push({ path: outputs.complete, bytes: views * rows * full.detector.channels * 4, smaller: 'leave out --complete' });
  if (!(SOLID_PHANTOM_NAMES as readonly string[]).includes(phantomArg)) {
    // A volume file or folder (NRRD, MetaImage, raw + JSON, DICOM series, TIFF), forward projected.
    const loaded = await loadVolume(phantomArg, 'phantom', a.options['mu-water'] as number | undefined, a);
    const truth = loaded.volume;
    if (outputs.truth) planned.push({ path: outputs.truth, bytes: truth.data.byteLength, smaller: 'a smaller phantom volume' });
    announceLargeOutput(planned, options);
    return { data: await projectVolume(truth, full, a.options.workers as number | undefined), truth, muWater: truth.muWater, readWarnings: loaded.warnings };
  }
  const p = namedSolidPhantom(phantomArg);
  // Before the work: the default volume is largest when the object is estimated no wider than the FOV.
  const planGrid = truthVolumeGrid(a, p, { geometry: scanGeometry, data: new Float32Array(0) }, fovRadius(scanGeometry));
  if (outputs.truth) planned.push({ path: outputs.truth, bytes: planGrid.nx * planGrid.ny * planGrid.nz * 4, smaller: '--size N --pixel mm --slices N (fewer, larger voxels)' });
  announceLargeOutput(planned, options);
  const data = await analyticConeProjections(p, full, subsamples, { onProgress: a.options.json ? undefined : progressLine('simulate') });
  return { data, truth: undefined, muWater: p.muWater, readWarnings: [] };
}
