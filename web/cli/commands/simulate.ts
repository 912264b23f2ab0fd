// rimfill simulate: projections of a phantom (built-in or an image file) in a geometry,
// optionally truncated (--channels, --offset) and with photon noise.
import { existsSync } from 'node:fs';
import { InputError } from '../../core/errors';
import { cropDetector } from '../../core/geometry/presets';
import type { Geometry } from '../../core/geometry/types';
import { fovRadius } from '../../core/geometry/view-vectors';
import { writeImageNrrd } from '../../core/formats/image-nrrd';
import { writeScanNrrd } from '../../core/formats/scan-nrrd';
import { squareGrid, type Image2D } from '../../core/image';
import { namedPhantom, PHANTOM_NAMES } from '../../core/phantoms';
import { rasterize } from '../../core/phantoms/ellipse';
import { Projector2d } from '../../core/recon/projector';
import type { Scan } from '../../core/scan';
import { analyticSinogram } from '../../core/simulate/analytic';
import { collimatedChannels } from '../../core/simulate/collimate';
import { addPhotonNoise } from '../../core/simulate/noise';
import { parseArgs, positiveNumber, requireString, type ParsedArgs } from '../args';
import { PendingWrites } from '../io';
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
  object; --truth writes the object on a grid (--size x --size pixels of --pixel mm, default:
  covering the object). An image phantom may be NRRD, MetaImage, raw + JSON, DICOM (file or
  series folder; HU need --mu-water) or TIFF; --slice picks one slice of a volume.
  Cone-beam geometries (e.g. --geometry demo-cone) simulate 3D phantoms or volumes (any of the
  image formats above, e.g. a DICOM series folder; HU need --mu-water); the truth is then a
  volume of --slices slices (default: the measured height).`;

export async function simulate(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, {
    phantom: 'string', geometry: 'string', channels: 'int', offset: 'number', photons: 'number', seed: 'int',
    out: 'string', truth: 'string', complete: 'string', size: 'int', pixel: 'number', subsamples: 'int', json: 'flag', workers: 'int',
    slice: 'int', 'mu-water': 'number', collimate: 'number', slices: 'int',
  }, 0);
  const out = requireString(a, 'out');
  const full = loadGeometry(requireString(a, 'geometry'));
  if (full.kind === 'cone') return simulateCone(a, full);
  if (a.options.slices !== undefined) throw new InputError('option --slices: only for cone-beam geometries (the truth of a 2D scan is one slice)');
  const phantomArg = requireString(a, 'phantom');
  const photons = positiveNumber(a, 'photons');
  const seed = (a.options.seed as number | undefined) ?? 1;
  const subsamples = (a.options.subsamples as number | undefined) ?? 1;
  if (!Number.isInteger(subsamples) || subsamples < 1 || subsamples > 16) throw new InputError(`option --subsamples: got ${subsamples}, expected 1 to 16`);
  const crop = detectorCrop(a, full);
  const { data, truth, muWater } = await projectPhantom(a, phantomArg, full, subsamples);
  let zeroCounts = 0;
  if (photons) zeroCounts = addPhotonNoise(data, photons, seed).zeroCounts;

  const notes: Record<string, string> = { phantom: phantomArg, ...(photons ? { photons: String(photons), seed: String(seed) } : {}) };
  const completeScan: Scan = { geometry: full, data, muWater, notes };
  const scan = crop ? cropScan(completeScan, crop) : completeScan;
  const writes = new PendingWrites();
  writes.add(out, await writeScanNrrd(scan));
  if (a.options.complete) writes.add(a.options.complete as string, await writeScanNrrd(completeScan));
  if (a.options.truth) writes.add(a.options.truth as string, await writeImageNrrd({ ...truth, fovRadius: fovRadius(scan.geometry) }));
  writes.commit();
  const summary = {
    out,
    views: data.length / full.detector.channels,
    channels: scan.geometry.detector.channels,
    fovRadiusMm: fovRadius(scan.geometry),
    photons: photons ?? null,
    zeroCountReadings: zeroCounts,
  };
  const warnings = zeroCounts > 0 ? [`${zeroCounts} readings had no photons and were clamped to 1 count`] : [];
  return { json: summary, text: `wrote ${out}: ${summary.views} views x ${summary.channels} channels, FOV radius ${summary.fovRadiusMm.toFixed(1)} mm`, warnings };
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

/**
 * Projections of the phantom on the whole detector and its truth grid: a named phantom exactly
 * (analytic line integrals), an image file by the Joseph projector.
 */
async function projectPhantom(a: ParsedArgs, phantomArg: string, full: Geometry, subsamples: number): Promise<{ data: Float32Array; truth: Image2D; muWater: number | undefined }> {
  const isFile = !(PHANTOM_NAMES as readonly string[]).includes(phantomArg) && (existsSync(phantomArg) || /[./\\]/.test(phantomArg));
  if (isFile) {
    const truth = await loadImage(phantomArg, 'phantom', a.options['mu-water'] as number | undefined, a.options.slice as number | undefined);
    const ws = await openWorkspace((a.options.workers as number | undefined) ?? undefined);
    try {
      const proj = await Projector2d.create(ws, truth.grid, full);
      const img = ws.alloc('phantom', truth.data.length);
      const sino = ws.alloc('sino', proj.nViews * proj.nCh);
      await ws.write(img, truth.data);
      await proj.forward(img, sino);
      return { data: await ws.read(sino), truth, muWater: truth.muWater };
    } finally {
      ws.dispose();
    }
  }
  const p = namedPhantom(phantomArg);
  const data = analyticSinogram(p, full, subsamples);
  const pixel = positiveNumber(a, 'pixel', 1)!;
  const size = (a.options.size as number | undefined) ?? Math.ceil((2 * p.radius) / pixel / 4) * 4 + 8;
  const truth: Image2D = { grid: squareGrid(size, pixel), data: new Float32Array(0), quantity: 'mu', muWater: p.muWater };
  if (a.options.truth) truth.data = rasterize(p, truth.grid, 4);
  return { data, truth, muWater: p.muWater };
}
