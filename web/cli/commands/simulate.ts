// rimfill simulate: projections of a phantom (built-in or an image file) in a geometry,
// optionally truncated (--channels, --offset) and with photon noise.
import { existsSync } from 'node:fs';
import { InputError } from '../../core/errors';
import { cropDetector } from '../../core/geometry/presets';
import { viewCount, type Geometry } from '../../core/geometry/types';
import { fovRadius } from '../../core/geometry/view-vectors';
import { writeImageNrrd } from '../../core/formats/image-nrrd';
import { writeScanNrrd } from '../../core/formats/scan-nrrd';
import { squareGrid, type Image2D, type ImageGrid } from '../../core/image';
import { namedPhantom, PHANTOM_NAMES } from '../../core/phantoms';
import { rasterize } from '../../core/phantoms/ellipse';
import { Projector2d } from '../../core/recon/projector';
import { chooseGrid, DEFAULT_GRID_SIZE } from '../../core/recipe/grid';
import type { Scan } from '../../core/scan';
import { analyticSinogram } from '../../core/simulate/analytic';
import { collimatedChannels } from '../../core/simulate/collimate';
import { addPhotonNoise } from '../../core/simulate/noise';
import { parseArgs, positiveNumber, requireString, type ParsedArgs } from '../args';
import { checkOutputs, PendingWrites, replacedWarnings } from '../io';
import { largeOutputWarning, stderrWarning, writtenLines, type PlannedFile } from '../output-report';
import { loadGeometry, loadImage } from '../load';
import { openWorkspace } from '../engine-node';
import { simulateCone } from './simulate-cone';
import type { CommandResult } from './types';

export const simulateHelp = `rimfill simulate --phantom <name|image file> --geometry <geom.json|preset> --out scan.nrrd
    [--channels N | --collimate mm] [--offset mm] [--photons I0] [--seed S] [--truth truth.nrrd]
    [--complete full.nrrd] [--size N] [--pixel mm] [--subsamples K] [--slice k] [--mu-water X] [--json]
  Simulates a scan. --channels keeps the N central channels (a truncated scan); --collimate
  keeps the channels whose rays pass within a centred region of that diameter (mm at the
  isocentre); --offset shifts the kept channels by that many mm along the detector (one side
  truncated more than the other). --complete also writes the untruncated scan of the same
  object; --truth writes the object on a grid: by default the grid that reconstruct uses for
  this scan when given none (so compare needs no resampling); --size x --size pixels of
  --pixel mm (with --pixel alone: covering the object). Every file written is listed with its
  size; more than 200 MB is announced before the work starts. An image phantom may be NRRD, MetaImage, raw + JSON, DICOM (file or
  series folder; HU need --mu-water) or TIFF; --slice picks one slice of a volume.
  Cone-beam geometries (e.g. --geometry demo-cone) simulate 3D phantoms or volumes (any of the
  image formats above, e.g. a DICOM series folder; HU need --mu-water); the truth is then a
  volume of --slices slices (default: the measured height).`;

/** Seams for tests: the size above which a warning is given, and where it goes. */
export interface SimulateOptions {
  warnAboveBytes?: number;
  warn?: (text: string) => void;
}

/** What simulate writes: the scan, and the truth and complete scan when asked for. */
export interface SimulateOutputs {
  out: string;
  truth?: string;
  complete?: string;
  /** Existing files that will be replaced. */
  replaced: string[];
}

/** The outputs of simulate, checked before any work (io.ts checkOutputs). */
export function simulateOutputs(a: ParsedArgs): SimulateOutputs {
  const out = requireString(a, 'out');
  const truth = a.options.truth as string | undefined, complete = a.options.complete as string | undefined;
  return { out, truth, complete, replaced: checkOutputs([['out', out], ['truth', truth], ['complete', complete]]) };
}

/** Warns (before the work) when the planned files exceed the limit. */
export function announceLargeOutput(files: PlannedFile[], o: SimulateOptions, command = 'simulate'): void {
  const w = largeOutputWarning(files, o.warnAboveBytes);
  if (w) (o.warn ?? stderrWarning(command))(w);
}

export async function simulate(argv: string[], options: SimulateOptions = {}): Promise<CommandResult> {
  const a = parseArgs(argv, {
    phantom: 'string', geometry: 'string', channels: 'int', offset: 'number', photons: 'number', seed: 'int',
    out: 'string', truth: 'string', complete: 'string', size: 'int', pixel: 'number', subsamples: 'int', json: 'flag', workers: 'int',
    slice: 'int', 'mu-water': 'number', collimate: 'number', slices: 'int',
  }, 0);
  const outputs = simulateOutputs(a);
  const { out } = outputs;
  const full = loadGeometry(requireString(a, 'geometry'));
  if (full.kind === 'cone') return simulateCone(a, full, outputs, options);
  if (a.options.slices !== undefined) throw new InputError('option --slices: only for cone-beam geometries (the truth of a 2D scan is one slice)');
  const phantomArg = requireString(a, 'phantom');
  const photons = positiveNumber(a, 'photons');
  const seed = (a.options.seed as number | undefined) ?? 1;
  const subsamples = (a.options.subsamples as number | undefined) ?? 1;
  if (!Number.isInteger(subsamples) || subsamples < 1 || subsamples > 16) throw new InputError(`option --subsamples: got ${subsamples}, expected 1 to 16`);
  const crop = detectorCrop(a, full);
  const phantom = await loadPhantom(a, phantomArg);
  announceLargeOutput(plannedFiles(a, outputs, full, crop, phantom), options);
  const data = await projectPhantom(a, phantom, full, subsamples);
  const { muWater } = phantom;
  let zeroCounts = 0;
  if (photons) zeroCounts = addPhotonNoise(data, photons, seed).zeroCounts;

  const notes: Record<string, string> = { phantom: phantomArg, ...(photons ? { photons: String(photons), seed: String(seed) } : {}) };
  const completeScan: Scan = { geometry: full, data, muWater, notes };
  const scan = crop ? cropScan(completeScan, crop) : completeScan;
  // A named phantom goes on its truth grid after the scan exists: by default the grid reconstruct picks for this scan.
  const truth = outputs.truth ? phantom.image ?? namedTruth(a, phantomArg, scan) : undefined;
  const views = viewCount(full);
  const writes = new PendingWrites();
  const what: Record<string, string> = {};
  const fov = fovRadius(scan.geometry);
  writes.add(out, await writeScanNrrd(scan));
  what[out] = `scan, ${views} views x ${scan.geometry.detector.channels} channels, FOV radius ${fov.toFixed(1)} mm`;
  if (outputs.complete) {
    writes.add(outputs.complete, await writeScanNrrd(completeScan));
    what[outputs.complete] = `complete scan, ${views} views x ${full.detector.channels} channels`;
  }
  if (outputs.truth && truth) {
    writes.add(outputs.truth, await writeImageNrrd({ ...truth, fovRadius: fov }));
    what[outputs.truth] = `ground truth, ${truth.grid.nx} x ${truth.grid.ny} pixels of ${Number(truth.grid.dx.toPrecision(6))} mm`;
  }
  const written = writes.commit();
  const summary = {
    out,
    views,
    channels: scan.geometry.detector.channels,
    fovRadiusMm: fov,
    photons: photons ?? null,
    zeroCountReadings: zeroCounts,
    files: written.map((w) => ({ path: w.path, bytes: w.bytes, replaced: w.replaced })),
    ...(truth ? { truthGrid: truth.grid } : {}),
  };
  const warnings = [...(zeroCounts > 0 ? [`${zeroCounts} readings had no photons and were clamped to 1 count`] : []), ...replacedWarnings(written)];
  return { json: summary, text: writtenLines(written, what).join('\n'), warnings };
}

/** The kept channels (--channels or --collimate, with --offset), or undefined for the whole detector. */
function detectorCrop(a: ParsedArgs, full: Geometry): ReturnType<typeof cropDetector> | undefined {
  if (a.options.channels !== undefined && a.options.collimate !== undefined) throw new InputError('options --channels and --collimate both choose the kept channels: give one');
  const collimate = positiveNumber(a, 'collimate');
  const channels = collimate !== undefined ? collimatedChannels(full, collimate) : (a.options.channels as number | undefined);
  return channels !== undefined || a.options.offset !== undefined
    ? cropDetector(full, channels ?? full.detector.channels, (a.options.offset as number | undefined) ?? 0)
    : undefined;
}

/** The scan on the kept channels only. */
function cropScan(complete: Scan, crop: ReturnType<typeof cropDetector>): Scan {
  const { data, muWater, notes } = complete;
  const n = crop.geometry.detector.channels, nFull = complete.geometry.detector.channels;
  const nViews = data.length / nFull;
  const cut = new Float32Array(nViews * n);
  for (let v = 0; v < nViews; v++) cut.set(data.subarray(v * nFull + crop.first, v * nFull + crop.first + n), v * n);
  return { geometry: crop.geometry, data: cut, muWater, notes: { ...notes, truncatedFrom: `${nFull} channels` } };
}

/** The phantom: an image file (its own grid is the truth's), or a named phantom (radius for the truth grid). */
interface Phantom {
  image?: Image2D;
  radius: number;
  muWater: number | undefined;
}

async function loadPhantom(a: ParsedArgs, phantomArg: string): Promise<Phantom> {
  const isFile = !(PHANTOM_NAMES as readonly string[]).includes(phantomArg) && (existsSync(phantomArg) || /[./\\]/.test(phantomArg));
  if (!isFile) {
    const p = namedPhantom(phantomArg);
    return { radius: p.radius, muWater: p.muWater };
  }
  const image = await loadImage(phantomArg, 'phantom', a.options['mu-water'] as number | undefined, a.options.slice as number | undefined);
  return { image, radius: 0, muWater: image.muWater };
}

/** What simulate will write, with estimated sizes, before any work (for the large-output warning). */
function plannedFiles(a: ParsedArgs, outputs: SimulateOutputs, full: Geometry, crop: ReturnType<typeof cropDetector> | undefined, phantom: Phantom): PlannedFile[] {
  const views = viewCount(full);
  const planned: PlannedFile[] = [{ path: outputs.out, bytes: views * (crop?.geometry ?? full).detector.channels * 4, smaller: 'a geometry with fewer views or channels' }];
  if (outputs.complete) planned.push({ path: outputs.complete, bytes: views * full.detector.channels * 4, smaller: 'leave out --complete' });
  if (outputs.truth) {
    planned.push(phantom.image
      ? { path: outputs.truth, bytes: phantom.image.data.byteLength, smaller: 'a smaller phantom image' }
      : { path: outputs.truth, bytes: truthSize(a, phantom.radius) ** 2 * 4, smaller: '--size N --pixel mm (fewer, larger pixels)' });
  }
  return planned;
}

/**
 * Projections of the phantom on the whole detector: a named phantom exactly (analytic line
 * integrals), an image file by the Joseph projector.
 */
async function projectPhantom(a: ParsedArgs, phantom: Phantom, full: Geometry, subsamples: number): Promise<Float32Array> {
  if (!phantom.image) return analyticSinogram(namedPhantom(requireString(a, 'phantom')), full, subsamples);
  const truth = phantom.image;
  const ws = await openWorkspace((a.options.workers as number | undefined) ?? undefined);
  try {
    const proj = await Projector2d.create(ws, truth.grid, full);
    const img = ws.alloc('phantom', truth.data.length);
    const sino = ws.alloc('sino', proj.nViews * proj.nCh);
    await ws.write(img, truth.data);
    await proj.forward(img, sino);
    return await ws.read(sino);
  } finally {
    ws.dispose();
  }
}

/** A named phantom rasterized on its truth grid (truthGrid). */
function namedTruth(a: ParsedArgs, phantomArg: string, scan: Scan): Image2D {
  const p = namedPhantom(phantomArg);
  const grid = truthGrid(a, p.radius, scan);
  return { grid, data: rasterize(p, grid, 4), quantity: 'mu', muWater: p.muWater };
}

/** Pixels along each side of the truth grid (--size; with --pixel alone, covering the phantom; else the default grid's). */
function truthSize(a: ParsedArgs, phantomRadius: number): number {
  if (a.options.size !== undefined) return a.options.size as number;
  if (a.options.pixel !== undefined) return Math.ceil((2 * phantomRadius) / positiveNumber(a, 'pixel')! / 4) * 4 + 8;
  return DEFAULT_GRID_SIZE;
}

/** The truth grid: --size/--pixel as given, or the grid a reconstruction of `scan` takes when it names none. */
function truthGrid(a: ParsedArgs, phantomRadius: number, scan: Scan): ImageGrid {
  if (a.options.size === undefined && a.options.pixel === undefined) return chooseGrid(scan);
  return squareGrid(truthSize(a, phantomRadius), positiveNumber(a, 'pixel', 1)!);
}
