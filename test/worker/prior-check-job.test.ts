// The page's check of a prior that is already an image (a stored result, or an image file) in
// Node (local engine, fake-indexeddb). The prior file is written by hand here (NRRD format
// specification, http://teem.sourceforge.net/nrrd/format.html: text header, blank line, raw
// little-endian float32), in HU with mu_water of the phantom, on a grid unlike the
// reconstruction's. Checks: the stored prior is the file's image; its stored report is the one
// computed directly; a false disk is localized to the rays that cross it; the data-consistent
// step removes at least 80% of the disk's contrast inside the FOV (the project's acceptance
// bar for prior-guided results: a false structure's contrast falls by at least 80%); the source result is never
// changed; bad requests and cancels store nothing.
import 'fake-indexeddb/auto';
import { createStore, keys as allKeys } from 'idb-keyval';
import { beforeAll, describe, expect, it } from 'vitest';
import { consistencyReport } from '../../web/core/consistency/consistency-report';
import type { Workspace } from '../../web/core/engine/workspace';
import { CancelledError, InputError } from '../../web/core/errors';
import { fovRadius } from '../../web/core/geometry/view-vectors';
import { gridOrigin, squareGrid, type ImageGrid } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { thorax } from '../../web/core/phantoms/thorax';
import type { Scan } from '../../web/core/scan';
import { loadConsistency } from '../../web/store/consistency';
import { getResultMeta, listResults, loadResultImage, saveResult } from '../../web/store/results';
import { saveScan } from '../../web/store/scans';
import { runPriorCheckJob, type PriorCheckOutcome } from '../../web/worker/prior-check-job';
import { cone } from '../helpers/cone';
import { contrastKept, diskImage, FALSE_DISK, type Disk } from '../helpers/disk';
import { localWorkspace } from '../helpers/engine';
import { expectDiskLocalized } from '../helpers/localization';
import { truncatedThoraxScan } from '../helpers/truncated-thorax';

const RECON = { size: 160, pixel: 3.6 }; // 576 mm: the whole phantom with its arms
const reconGrid = squareGrid(RECON.size, RECON.pixel);
const FILE_GRID: ImageGrid = squareGrid(400, 1.5); // 600 mm, finer pixels: the prior is resampled
const DISK: Disk = { cx: -30, cy: -20, r: 15, value: 0.01 }; // about +500 HU, inside the FOV (radius 102 mm)

let ws: Workspace;
let scan: Scan;
let scanId: string;
let store: ReturnType<typeof createStore>;
let truthFile: Float32Array;
let fromFile: PriorCheckOutcome, fromResult: PriorCheckOutcome;
let cleanResultId: string;

/** An NRRD file of `mu` in HU (float32, little endian), written without the project's writer. */
function huNrrd(mu: Float32Array, g: ImageGrid, muWater: number): File {
  const { x0, y0 } = gridOrigin(g);
  const header = `NRRD0004\ntype: float\ndimension: 2\nsizes: ${g.nx} ${g.ny}\nendian: little\nencoding: raw\n`
    + `space dimension: 2\nspace directions: (${g.dx},0) (0,${g.dy})\nspace origin: (${x0},${y0})\nrimfill.quantity:=hu\n\n`;
  const hu = mu.map((v) => (1000 * (v - muWater)) / muWater);
  return new File([new TextEncoder().encode(header), new Uint8Array(hu.buffer)], 'prior.nrrd');
}

const resultKeys = async () => (await allKeys(store)).map(String).filter((k) => k.startsWith('result'));

beforeAll(async () => {
  ws = await localWorkspace(2);
  store = createStore('prior-check', 'records');
  const t = truncatedThoraxScan(180);
  scan = t.scan;
  scanId = (await saveScan({ name: 'thorax', scan, source: { type: 'file', fileNames: ['t.nrrd'] } }, store)).id;
  const disk = diskImage(DISK, FILE_GRID);
  truthFile = rasterize(t.phantom, FILE_GRID, 4).map((v, i) => v + disk[i]);
  // A clean prior, stored as a result of the scan (as if reconstructed from an earlier full scan).
  const clean = rasterize(t.phantom, FILE_GRID, 4);
  cleanResultId = (await saveResult({ scanId, name: 'earlier full scan', recipe: { method: 'fbp' }, warnings: [], report: {}, metrics: null, seconds: 1 },
    { grid: FILE_GRID, data: clean, quantity: 'mu', muWater: scan.muWater }, store)).id;
  fromFile = await runPriorCheckJob({ ws, store }, { scanId, source: { kind: 'file', files: [huNrrd(truthFile, FILE_GRID, scan.muWater!)] }, grid: RECON, dataConsistent: true });
  fromResult = await runPriorCheckJob({ ws, store }, { scanId, source: { kind: 'result', resultId: cleanResultId }, grid: RECON, dataConsistent: true });
}, 600_000);

describe('prior check of an image file or a stored result', () => {
  it('stores the file\'s image as the checked prior, with the report computed directly', async () => {
    expect(fromFile.prior.recipe).toEqual({ method: 'checked-prior', source: { kind: 'file', fileNames: ['prior.nrrd'] } });
    expect(fromFile.prior.name).toBe('Prior: prior.nrrd');
    const { image } = await loadResultImage(fromFile.prior.id, store);
    expect(image.grid).toEqual(FILE_GRID);
    // HU -> mu with the scan's mu_water: float32 rounding only.
    let worst = 0;
    for (let i = 0; i < image.data.length; i++) worst = Math.max(worst, Math.abs(image.data[i] - truthFile[i]));
    expect(worst).toBeLessThan(1e-6);
    const stored = (await loadConsistency(fromFile.prior.id, store))!;
    const direct = await consistencyReport(ws, scan, image);
    expect(stored.checkedGrid).toEqual(FILE_GRID);
    expect(stored.report.summary).toEqual(direct.summary);
    expect(Buffer.from(stored.report.residual.buffer).equals(Buffer.from(direct.residual.buffer))).toBe(true);
  });

  it('the report of a file prior with a false disk in the chest wall flags the rays that cross it', async () => {
    const disk = diskImage(FALSE_DISK, FILE_GRID);
    const mu = rasterize(thorax(), FILE_GRID, 4).map((v, i) => v + disk[i]);
    const out = await runPriorCheckJob({ ws, store }, { scanId, source: { kind: 'file', files: [huNrrd(mu, FILE_GRID, scan.muWater!)] }, dataConsistent: false });
    expect(out.consistent).toBeUndefined();
    expect(out.prior.report.dataConsistent).toEqual({ skipped: 'it was not asked for' });
    // The disk's rays, and only they, disagree (margin as in network-prior-job.test.ts: 2 px + 2.5 mm).
    expectDiskLocalized((await loadConsistency(out.prior.id, store))!.report, scan.geometry, FALSE_DISK, 2 * 1.5 + 2.5);
  });

  it('links the data-consistent result to the checked prior, on the grid asked for', async () => {
    const dc = fromFile.consistent!;
    expect(dc.recipe).toMatchObject({ method: 'prior', prior: { source: 'checked-prior', from: { kind: 'file' }, resultId: fromFile.prior.id }, grid: RECON });
    expect(dc.grid).toEqual(reconGrid);
    expect((await loadConsistency(dc.id, store))!.checkedGrid).toEqual(reconGrid);
  });

  it('the data-consistent result keeps less than 20% of the false disk\'s contrast inside the FOV', async () => {
    expect(Math.hypot(DISK.cx, DISK.cy) + DISK.r).toBeLessThan(fovRadius(scan.geometry));
    const withDisk = (await loadResultImage(fromFile.consistent!.id, store)).image.data;
    const clean = (await loadResultImage(fromResult.consistent!.id, store)).image.data;
    const { kept, pixels } = contrastKept(withDisk, clean, DISK, reconGrid);
    expect(pixels).toBeGreaterThan(40);
    expect(Math.abs(kept)).toBeLessThan(0.2 * DISK.value);
    // The check before the step saw the disk; the clean prior far less disagreement.
    const before = (await loadConsistency(fromFile.prior.id, store))!.report.summary;
    const cleanBefore = (await loadConsistency(fromResult.prior.id, store))!.report.summary;
    expect(before.flaggedRays).toBeGreaterThan(2 * cleanBefore.flaggedRays);
  });

  it('a stored result as prior is copied, never changed', async () => {
    const source = await getResultMeta(cleanResultId, store);
    expect(source.consistency).toBeUndefined();
    expect(source.name).toBe('earlier full scan');
    expect(fromResult.prior.recipe).toEqual({ method: 'checked-prior', source: { kind: 'result', resultId: cleanResultId, scanId, name: 'earlier full scan' } });
    expect(fromResult.prior.consistency).toBeDefined();
    const ids = (await listResults(scanId, store)).map((r) => r.id);
    expect(ids).toEqual(expect.arrayContaining([cleanResultId, fromFile.prior.id, fromFile.consistent!.id, fromResult.prior.id, fromResult.consistent!.id]));
  });

  it('refuses a malformed file, a missing result and a cone-beam scan with the reason, and stores nothing', async () => {
    const before = await resultKeys();
    const liar = new File([new TextEncoder().encode('NRRD0004\ntype: float\ndimension: 2\nsizes: 64 64\nencoding: raw\nendian: little\n\n'), new Uint8Array(100)], 'short.nrrd');
    const err = await runPriorCheckJob({ ws, store }, { scanId, source: { kind: 'file', files: [liar] }, dataConsistent: true }).catch((e) => e);
    expect(err).toBeInstanceOf(InputError);
    expect(err.message).toMatch(/short\.nrrd/);
    await expect(runPriorCheckJob({ ws, store }, { scanId, source: { kind: 'result', resultId: '' }, dataConsistent: false })).rejects.toThrow(/choose the result/);
    await expect(runPriorCheckJob({ ws, store }, { scanId, source: { kind: 'file', files: [] }, dataConsistent: false })).rejects.toThrow(/choose the image file/);
    await expect(runPriorCheckJob({ ws, store }, { scanId, source: { kind: 'network' } as never, dataConsistent: false })).rejects.toThrow(/expected a stored result or an image file/);
    await expect(runPriorCheckJob({ ws, store }, { scanId, source: { kind: 'result', resultId: cleanResultId }, dataConsistent: true, iterations: 1.5 })).rejects.toThrow(/iterations: got 1.5/);
    const c = cone({ channels: 16, rows: 8, pitch: 1, views: 12 });
    const coneId = (await saveScan({ name: 'c-arm', scan: { geometry: c, data: new Float32Array(16 * 8 * 12) }, source: { type: 'file', fileNames: ['c.nrrd'] } }, store)).id;
    await expect(runPriorCheckJob({ ws, store }, { scanId: coneId, source: { kind: 'result', resultId: cleanResultId }, dataConsistent: false })).rejects.toThrow(/scan "c-arm" has 8 detector rows \(cone beam\); the prior check works on 2D scans/);
    expect(await resultKeys()).toEqual(before);
  });

  it('a run cancelled during the data-consistent step stores nothing', async () => {
    const before = await resultKeys();
    const ctl = new AbortController();
    const err = await runPriorCheckJob({ ws, store }, { scanId, source: { kind: 'result', resultId: cleanResultId }, grid: RECON, dataConsistent: true }, {
      signal: ctl.signal,
      onProgress: (f) => (f > 0.3 ? ctl.abort() : undefined),
    }).catch((e) => e);
    expect(err).toBeInstanceOf(CancelledError);
    expect(await resultKeys()).toEqual(before);
  });
});
