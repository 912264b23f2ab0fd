// The coordinator (the page's worker logic) in Node: a local engine workspace and fake-indexeddb.
// Imports store all or nothing, runs store a result with metrics, a cancelled run stores nothing,
// and the built-in demo scan is exactly the scan the CLI simulates with the same settings.
import 'fake-indexeddb/auto';
import { createStore } from 'idb-keyval';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { simulate } from '../../web/cli/commands/simulate';
import { compareImages } from '../../web/core/compare';
import { CancelledError, InputError } from '../../web/core/errors';
import { writeImageNrrd } from '../../web/core/formats/image-nrrd';
import { readImageNrrd } from '../helpers/read-nrrd';
import { writeVolumeNrrd } from '../../web/core/formats/volume-nrrd';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { readScanNrrd } from '../helpers/read-nrrd';
import { squareGrid } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import type { Geometry } from '../../web/core/geometry/types';
import { listResults, loadResultImage } from '../../web/store/results';
import { listScans, loadScan, saveScan } from '../../web/store/scans';
import { loadSettings } from '../../web/store/settings';
import { Coordinator } from '../../web/worker/coordinator';
import { buildDemoScan, DEMO } from '../../web/worker/demo-scan';
import { CONE_DEMO, coneDemoGeometry } from '../../web/worker/demo-cone-scan';
import { loadResultVolume } from '../../web/store/results';
import { writeFileSync } from 'node:fs';
import { cone as smallCone } from '../helpers/cone';
import { localWorkspace } from '../helpers/engine';

let n = 0;
const coordinator = () => {
  const store = createStore(`coord-${n++}`, 'records');
  return { store, c: new Coordinator({ openWorkspace: () => localWorkspace(2), sharedMemory: false, store }) };
};

// A small parallel-beam scan of the modified Shepp-Logan phantom, 80 mm across.
const geometry: Geometry = { kind: 'parallel', detector: { shape: 'flat', channels: 96, rows: 1, pitch: [1, 1], offset: [0, 0] }, anglesDeg: { start: 0, step: 1.5, count: 120 } };
function smallScan() {
  const scaled = { ...sheppLogan('modified', 40, 0.02), muWater: 0.02 };
  return { scan: { geometry, data: analyticSinogram(scaled, geometry, 2), muWater: 0.02 }, truth: rasterize(scaled, squareGrid(64, 1.25), 2) };
}

async function nrrdFile(name: string): Promise<File> {
  const bytes = await writeScanNrrd(smallScan().scan);
  return new File([bytes as BlobPart], name);
}

describe('import', () => {
  it('stores a valid scan file under its file name', async () => {
    const { c, store } = coordinator();
    const meta = await c.importScan([await nrrdFile('phantom.nrrd')], undefined, undefined, {});
    expect(meta).toMatchObject({ name: 'phantom.nrrd', hasReference: false, source: { type: 'file', fileNames: ['phantom.nrrd'] } });
    const back = await loadScan(meta.id, store);
    expect(Array.from(back.scan.data.subarray(0, 50))).toEqual(Array.from(smallScan().scan.data.subarray(0, 50)));
  });

  it('refuses a damaged file with the reason and stores nothing', async () => {
    const { c, store } = coordinator();
    const good = await writeScanNrrd(smallScan().scan);
    const damaged = new File([good.subarray(0, good.length - 1000) as BlobPart], 'cut.nrrd');
    await expect(c.importScan([damaged], undefined, undefined, {})).rejects.toThrow(/cut\.nrrd: NRRD: the header promises 46080 bytes of data from byte \d+, the file holds 45080/);
    await expect(c.importScan([new File(['hello'], 'notes.txt')], undefined, undefined, {})).rejects.toThrow(InputError);
    const nan = smallScan().scan;
    nan.data[7] = NaN;
    await expect(c.importScan([new File([(await writeScanNrrd(nan)) as BlobPart], 'nan.nrrd')], undefined, undefined, {})).rejects.toThrow(/1 of 11520 line integrals are not finite numbers/);
    expect(await listScans(store)).toEqual([]);
  });

  it('takes a .json geometry beside the scan file', async () => {
    const { c } = coordinator();
    const g2 = { ...geometry, anglesDeg: { start: 90, step: 1.5, count: 120 } };
    const meta = await c.importScan([await nrrdFile('p.nrrd'), new File([JSON.stringify(g2)], 'p.json')], 'with side file', undefined, {});
    expect(meta.geometry.anglesDeg).toEqual(g2.anglesDeg);
    await expect(c.importScan([await nrrdFile('p.nrrd'), new File(['{"kind":"fan"'], 'g.json')], undefined, undefined, {})).rejects.toThrow(/g\.json: not valid JSON/);
  });
});

describe('runs', () => {
  it('stores the image with its comparison against the reference', async () => {
    const { c, store } = coordinator();
    const { scan, truth } = smallScan();
    const s = await saveScan({ name: 'phantom', scan, source: { type: 'file', fileNames: [] }, reference: { grid: squareGrid(64, 1.25), data: truth, muWater: 0.02 } }, store);
    const stages: string[] = [];
    const r = await c.run(s.id, { method: 'fbp', filter: 'hann', grid: { size: 64, pixel: 1.25 } }, undefined, { onProgress: (_f, st) => stages.push(st) });
    expect(r.name).toBe('FBP, no correction, hann, 64 px × 1.25 mm');
    expect(stages).toContain('backproject');
    const whole = r.metrics!.regions.image!;
    // The reconstruction is much closer to the truth than an empty image is (a broken run,
    // e.g. a wrong geometry or a lost band of rows, would not be).
    const blank = compareImages({ grid: squareGrid(64, 1.25), data: new Float32Array(64 * 64), quantity: 'mu', muWater: 0.02 }, { grid: squareGrid(64, 1.25), data: truth, quantity: 'mu', muWater: 0.02 });
    expect(whole.rmse).toBeGreaterThan(1);
    expect(whole.rmse).toBeLessThan(0.5 * blank.regions.image!.rmse);
    expect(whole.ssim).toBeGreaterThan(blank.regions.image!.ssim + 0.3);
    expect((await listResults(s.id, store)).map((x) => x.id)).toEqual([r.id]);
    // The stored result carries its agreement with the measured data (re-projection residual):
    // a complete scan's FBP re-projects onto its data within a few percent, far below the 100%
    // of an empty image (||0 - p|| / ||p|| = 1 by definition).
    expect(r.residual!.rays).toBe(scan.data.length);
    expect(r.residual!.relative).toBeGreaterThan(0);
    expect(r.residual!.relative).toBeLessThan(0.2);
    const cmp = await c.compare(r.id, { kind: 'reference' });
    expect(cmp.regions.image!.rmse).toBeCloseTo(whole.rmse, 6);
    const self = await c.compare(r.id, { kind: 'result', id: r.id });
    expect(self.regions.image!.rmse).toBe(0);
  });

  it('a bad recipe is refused before any work, a cancelled run stores nothing', async () => {
    const { c, store } = coordinator();
    const s = await saveScan({ name: 'p', scan: smallScan().scan, source: { type: 'file', fileNames: [] } }, store);
    await expect(c.run(s.id, { method: 'magic' }, undefined, {})).rejects.toThrow(/recipe method: got "magic"/);
    const ctl = new AbortController();
    const run = c.run(s.id, { method: 'fbp', grid: { size: 64, pixel: 1.25 } }, undefined, {
      signal: ctl.signal,
      onProgress: (f) => f >= 0.2 && ctl.abort(),
    });
    await expect(run).rejects.toThrow(CancelledError);
    expect(await listResults(undefined, store)).toEqual([]);
    // The workspace still works after a cancel.
    expect((await c.run(s.id, { method: 'fbp', grid: { size: 32, pixel: 2.5 } }, undefined, {})).grid.nx).toBe(32);
  });
});

describe('a stored result as the prior of a recipe', () => {
  it('gives the same image as the recipe that made the result; what cannot serve is refused and nothing is stored', async () => {
    const { c, store } = coordinator();
    const s = await saveScan({ name: 'p', scan: smallScan().scan, source: { type: 'file', fileNames: [] } }, store);
    const grid = { size: 64, pixel: 1.25 };
    const fbp = await c.run(s.id, { method: 'fbp', extend: 'water', grid }, undefined, {});
    const common = { method: 'prior', grid, iterations: 2, subsets: 6 };
    const fromResult = await c.run(s.id, { ...common, prior: { source: 'image', resultId: fbp.id, name: fbp.name } }, undefined, {});
    const fromRecipe = await c.run(s.id, { ...common, prior: { source: 'recipe', recipe: { method: 'fbp', extend: 'water', grid } } }, undefined, {});
    expect(fromResult.name).toContain(`prior: “${fbp.name}”`);
    // The same prior image either way (FBP is deterministic): the same reconstruction.
    const a = (await loadResultImage(fromResult.id, store)).image.data, b = (await loadResultImage(fromRecipe.id, store)).image.data;
    let worst = 0, scale = 0;
    for (let i = 0; i < a.length; i++) [worst, scale] = [Math.max(worst, Math.abs(a[i] - b[i])), Math.max(scale, Math.abs(b[i]))];
    expect(scale).toBeGreaterThan(0.01);
    expect(worst).toBeLessThan(1e-6 * scale);

    const before = (await listResults(s.id, store)).length;
    await expect(c.run(s.id, { ...common, prior: { source: 'image' } }, undefined, {})).rejects.toThrow(/the page takes a prior image from a stored result; choose one/);
    await expect(c.run(s.id, { ...common, prior: { source: 'image', resultId: 'gone', name: 'old FBP' } }, undefined, {})).rejects.toThrow(/the result "old FBP" is no longer stored/);
    const coneScan = await saveScan({ name: 'c-arm', scan: { geometry: smallCone({ channels: 16, rows: 8, pitch: 1, views: 12 }), data: new Float32Array(16 * 8 * 12) }, source: { type: 'file', fileNames: [] } }, store);
    await expect(c.run(coneScan.id, { ...common, prior: { source: 'image', resultId: fbp.id } }, undefined, {})).rejects.toThrow(/holds a 2D image; a cone-beam scan needs a volume as its prior/);
    expect((await listResults(s.id, store)).length).toBe(before);
  });
});

describe('an image file added to a scan', () => {
  it('is stored as a result, compared with the reference and checked against the data; a bad file stores nothing', async () => {
    const { c, store } = coordinator();
    const { scan, truth } = smallScan();
    const grid = squareGrid(64, 1.25);
    const s = await saveScan({ name: 'phantom', scan, source: { type: 'file', fileNames: [] }, reference: { grid, data: truth, muWater: 0.02 } }, store);
    // The truth in HU: the rescale rule HU = 1000 (mu - mu_w) / mu_w (REFERENCES.md [hu-definition]), mu_water from the scan.
    const hu = truth.map((v) => (1000 * (v - 0.02)) / 0.02);
    const file = new File([(await writeImageNrrd({ grid, data: hu, quantity: 'hu' })) as BlobPart], 'earlier.nrrd');
    const r = await c.importImage(s.id, [file], undefined, {});
    expect(r).toMatchObject({ name: 'Image file: earlier.nrrd', recipe: { method: 'imported', fileNames: ['earlier.nrrd'] } });
    // The reference itself, read back: RMSE within float rounding of the HU conversion.
    expect(r.metrics!.regions.image!.rmse).toBeLessThan(0.01);
    // The phantom on 1.25 mm pixels re-projects onto the analytic data within a few percent.
    expect(r.residual!.relative).toBeLessThan(0.05);
    expect(r.residual!.rays).toBe(scan.data.length);

    const before = await listResults(s.id, store);
    const short = new File([(await writeImageNrrd({ grid, data: hu, quantity: 'hu' })).subarray(0, 2000) as BlobPart], 'cut.nrrd');
    await expect(c.importImage(s.id, [short], undefined, {})).rejects.toThrow(/cut\.nrrd: /);
    const noMu = await saveScan({ name: 'no mu', scan: { ...scan, muWater: undefined }, source: { type: 'file', fileNames: [] } }, store);
    await expect(c.importImage(noMu.id, [file], undefined, {})).rejects.toThrow(/earlier\.nrrd: .*mu_water/);
    expect(await listResults(s.id, store)).toEqual(before);
    expect(await listResults(noMu.id, store)).toEqual([]);
  });

  it('is a volume for a cone-beam scan', async () => {
    const { c, store } = coordinator();
    const g = smallCone({ channels: 16, rows: 8, pitch: 1, views: 12 });
    const s = await saveScan({ name: 'c-arm', scan: { geometry: g, data: new Float32Array(16 * 8 * 12), muWater: 0.02 }, source: { type: 'file', fileNames: [] } }, store);
    const vgrid = { nx: 8, ny: 8, nz: 4, dx: 1, dy: 1, dz: 1, cx: 0, cy: 0, cz: 0 };
    const data = new Float32Array(8 * 8 * 4).fill(0.02);
    const file = new File([(await writeVolumeNrrd({ grid: vgrid, data, quantity: 'mu' })) as BlobPart], 'vol.nrrd');
    await expect(c.importImage(s.id, [file], 2, {})).rejects.toThrow(/a cone-beam scan takes the whole volume/);
    const r = await c.importImage(s.id, [file], undefined, {});
    expect(r.volume).toBeDefined();
    const { volume } = await loadResultVolume(r.id, store);
    expect(volume.grid).toMatchObject({ nx: 8, ny: 8, nz: 4 });
    expect(Array.from(volume.data)).toEqual(Array.from(data));
    // A uniform volume against zero data: the residual is all of its projections.
    expect(r.residual!.rays).toBe(16 * 8 * 12);
  });
});

describe('demo scan', () => {
  it('is the scan and truth `rimfill simulate` writes with the same settings', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'rimfill-demo-'));
    const f = (x: string) => join(dir, x);
    // The page's settings (DEMO), with a coarse truth grid to keep the test short.
    const small = { ...DEMO, truthSize: 48, truthPixel: 12 };
    expect(DEMO).toMatchObject({ preset: 'demo', channels: 345, photons: 200_000, seed: 7, truthSize: 576, truthPixel: 1, truthSubsamples: 4 });
    await simulate(['--phantom', 'thorax', '--geometry', DEMO.preset, '--channels', String(DEMO.channels), '--photons', String(DEMO.photons),
      '--seed', String(DEMO.seed), '--out', f('scan.nrrd'), '--truth', f('truth.nrrd'), '--size', String(small.truthSize), '--pixel', String(small.truthPixel)]);
    const cli = await readScanNrrd(readFileSync(f('scan.nrrd')));
    const cliTruth = await readImageNrrd(readFileSync(f('truth.nrrd')));
    const { c, store } = coordinator();
    const fractions: number[] = [];
    const meta = await c.createDemo({ onProgress: (x) => fractions.push(x) }, small);
    const page = await loadScan(meta.id, store);
    expect(page.scan.geometry).toEqual(cli.geometry);
    expect(page.scan.muWater).toBe(cli.muWater);
    expect(page.scan.data).toEqual(cli.data);
    expect(page.reference!.grid).toEqual(cliTruth.grid);
    let maxDiff = 0;
    for (let i = 0; i < cliTruth.data.length; i++) maxDiff = Math.max(maxDiff, Math.abs(page.reference!.data[i] - cliTruth.data[i]));
    // Same sub-pixel sample positions; only the rounding of each band's origin differs.
    expect(maxDiff).toBeLessThan(1e-7);
    expect(page.reference!.fovRadius).toBeCloseTo(cliTruth.fovRadius!, 4);
    expect(fractions.at(-1)).toBe(1);
    expect((await loadSettings(store)).demoCreated).toBe(true);
  });

  it('stops when cancelled', async () => {
    const ctl = new AbortController();
    const p = buildDemoScan({ signal: ctl.signal, onProgress: (f) => f > 0.1 && ctl.abort() });
    await expect(p).rejects.toThrow(CancelledError);
  });
});

describe('cone-beam demo scan', () => {
  it('is the scan `rimfill simulate` writes with the same settings; FDK runs on it and stores its volume with metrics', async () => {
    // The page's settings (CONE_DEMO) binned further and with a coarse truth to keep the test short.
    expect(CONE_DEMO).toMatchObject({ preset: 'demo-cone', bin: 2, viewStep: 2, photons: 200_000, seed: 7 });
    const small = { ...CONE_DEMO, bin: 8, viewStep: 8, truthVoxel: 12 };
    const dir = mkdtempSync(join(tmpdir(), 'rimfill-cone-demo-'));
    const f = (x: string) => join(dir, x);
    writeFileSync(f('g.json'), JSON.stringify(coneDemoGeometry(small)));
    await simulate(['--phantom', 'thorax', '--geometry', f('g.json'), '--photons', String(small.photons), '--seed', String(small.seed), '--out', f('scan.nrrd')]);
    const cli = await readScanNrrd(readFileSync(f('scan.nrrd')));
    const { c, store } = coordinator();
    const fractions: number[] = [];
    const meta = await c.createConeDemo({ onProgress: (x) => fractions.push(x) }, small);
    expect(meta.referenceVolume?.grid).toMatchObject({ dx: 12, dz: 12 });
    expect(meta.referenceVolume!.grid.nz % 2).toBe(1);
    const page = await loadScan(meta.id, store);
    expect(page.scan.geometry).toEqual(cli.geometry);
    let differ = 0;
    for (let i = 0; i < cli.data.length; i++) if (page.scan.data[i] !== cli.data[i]) differ++;
    expect(differ).toBe(0);
    expect(fractions.at(-1)).toBe(1);

    const r = await c.run(meta.id, { method: 'fbp', extend: 'water', grid: { size: 48, pixel: 12 } }, undefined, {});
    expect(r.volume?.grid).toMatchObject({ nx: 48, dx: 12 });
    const { volume } = await loadResultVolume(r.id, store);
    expect(volume.data.length).toBe(48 * 48 * r.volume!.grid.nz);
    // Figures over the FOV cylinder against the reference volume, and the residual on every ray.
    expect(r.volumeMetrics!.unit).toBe('HU');
    expect(r.volumeMetrics!.regions.insideFov!.pixels).toBeGreaterThan(100);
    expect(r.volumeMetrics!.fovRadiusMm).toBeCloseTo(118.5, 0);
    expect(r.residual!.rays).toBe(page.scan.data.length);
    expect(r.metrics!.regions.insideFov).not.toBeNull();
  });
});

describe('import of other formats through the page', () => {
  // The page reads with the same entry point as the CLI (readScanFile): a raw + JSON sidecar
  // scan, and TIFF-free intensity data with flat and dark files named flat* / dark*.
  it('reads a raw file with its JSON sidecar', async () => {
    const { readScanFiles } = await import('../../web/worker/import-scan');
    const geometry = { kind: 'parallel', detector: { shape: 'flat', channels: 4, rows: 1, pitch: [1, 1], offset: [0, 0] }, anglesDeg: { start: 0, step: 90, count: 2 } };
    const data = new Float32Array([0, 1, 2, 3, 4, 5, 6, 7]);
    const sidecar = JSON.stringify({ dtype: 'float32', sizes: [4, 1, 2], geometry, quantity: 'line-integral' });
    const files = [new File([data as BlobPart], 's.raw'), new File([sidecar], 's.json')];
    const { scan } = await readScanFiles(files);
    expect(Array.from(scan.data)).toEqual(Array.from(data));
    expect(scan.geometry.kind).toBe('parallel');
  });
});
