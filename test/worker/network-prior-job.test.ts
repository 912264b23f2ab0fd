// The page's network-prior step in Node (local engine, Node runtime, fake-indexeddb): the
// network's output is stored as a result with its consistency report, the stored report is
// the one computed directly, the data-residual figures read off it match a separate
// re-projection, a cancelled run stores nothing, and what cannot run is refused with a reason.
import 'fake-indexeddb/auto';
import { createStore, keys as allKeys } from 'idb-keyval';
import { beforeAll, describe, expect, it } from 'vitest';
import { consistencyReport } from '../../web/core/consistency/consistency-report';
import { dataResidualOf } from '../../web/core/consistency/residual-figures';
import { dataResidual } from '../../web/core/data-residual';
import type { Workspace } from '../../web/core/engine/workspace';
import { CancelledError, InputError } from '../../web/core/errors';
import { gridOrigin, squareGrid } from '../../web/core/image';
import { validateModelInfo } from '../../web/core/model/description';
import { networkInputRecipe } from '../../web/core/model/network-input';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { runRecipe } from '../../web/core/recipe/run';
import type { Scan } from '../../web/core/scan';
import { loadConsistency } from '../../web/store/consistency';
import { saveModel } from '../../web/store/models';
import { listResults, loadResultImage } from '../../web/store/results';
import { saveScan } from '../../web/store/scans';
import { runNetworkPriorJob, type NetworkPriorContext } from '../../web/worker/network-prior-job';
import { cone } from '../helpers/cone';
import { diskImage, FALSE_DISK } from '../helpers/disk';
import { localWorkspace } from '../helpers/engine';
import { expectDiskLocalized } from '../helpers/localization';
import { addImageModel, openNetworkNode } from '../helpers/networks';
import { truncatedThoraxScan } from '../helpers/truncated-thorax';

const SIZE = 400, PIXEL = 1.5; // 600 mm: the whole thorax phantom with its arms
const grid = squareGrid(SIZE, PIXEL);
const descriptionJson = { format: 'rimfill-model/1', name: 'bright disk', input: { name: 'image', quantity: 'mu', size: SIZE, pixel: PIXEL, from: { method: 'fbp', extend: 'water' } }, output: { name: 'prior', quantity: 'mu' } };
const info = validateModelInfo(descriptionJson);

let ws: Workspace;
let scan: Scan;
/** The network input (water-extended FBP on the model grid) and what the network returns: the phantom plus a false disk. */
let input: Float32Array;
let wanted: Float32Array;
let n = 0;

async function setUp(s: Scan = scan) {
  const store = createStore(`prior-job-${n++}`, 'records');
  const scanMeta = await saveScan({ name: 'thorax', scan: s, source: { type: 'file', fileNames: ['t.nrrd'] } }, store);
  // A restoration that is right except for a false bright disk (network-prior.test.ts).
  const onnx = addImageModel(wanted.map((v, i) => v - input[i]), SIZE);
  const model = await saveModel({ name: 'bright disk', info, signature: (await openNetworkNode(onnx)).signature, fileNames: { model: 'disk.onnx', description: 'disk.json' }, warnings: [], onnx, description: JSON.stringify(descriptionJson) }, store);
  const ctx: NetworkPriorContext = { ws, store, open: (b) => openNetworkNode(b) };
  return { store, ctx, scanId: scanMeta.id, modelId: model.id };
}

beforeAll(async () => {
  ws = await localWorkspace(2);
  const t = truncatedThoraxScan(180);
  scan = t.scan;
  input = (await runRecipe(ws, scan, networkInputRecipe(info, grid))).image.data;
  const disk = diskImage(FALSE_DISK, grid);
  wanted = rasterize(t.phantom, grid, 4).map((v, i) => v + disk[i]);
});

describe('network-prior step of the page', () => {
  it('stores the network output with the consistency report computed directly', async () => {
    const { store, ctx, scanId, modelId } = await setUp();
    const stages: string[] = [];
    const out = await runNetworkPriorJob(ctx, { scanId, modelId, dataConsistent: false, grid: { size: 128, pixel: 4.5 } }, { onProgress: (_, s) => stages.push(s) });
    expect(stages).toEqual(expect.arrayContaining(['network input', 'network', 'reprojection', 'disagreement map', 'storing']));
    // Without the data-consistent step only the network output is stored, and it says why.
    expect(out.consistent).toBeUndefined();
    expect(out.network.report.dataConsistent).toEqual({ skipped: 'it was not asked for' });
    expect((await listResults(scanId, store)).map((r) => r.id)).toEqual([out.network.id]);
    expect(out.network.recipe).toMatchObject({ method: 'network', model: { id: modelId, name: 'bright disk' }, grid: { size: 128, pixel: 4.5 } });

    // The stored output is what the network returns (float32 rounding of input + (wanted - input)).
    const { image } = await loadResultImage(out.network.id, store);
    expect(image.grid).toEqual(grid);
    let worst = 0;
    for (let i = 0; i < image.data.length; i++) worst = Math.max(worst, Math.abs(image.data[i] - wanted[i]));
    expect(worst).toBeLessThan(1e-5);

    const stored = await loadConsistency(out.network.id, store);
    const direct = await consistencyReport(ws, scan, image);
    expect(stored!.checkedGrid).toEqual(grid);
    expect(stored!.report.summary).toEqual(direct.summary);
    expect(Buffer.from(stored!.report.residual.buffer).equals(Buffer.from(direct.residual.buffer))).toBe(true);
    expect(Buffer.from(stored!.report.profiles.flagged).equals(Buffer.from(direct.profiles.flagged))).toBe(true);
    expectDiskLocalized(stored!.report, scan.geometry, FALSE_DISK, 2 * PIXEL + 2.5);
    // The disagreement map lights the disk up and little else (disagreement-map.test.ts).
    const map = stored!.map!;
    const { x0, y0 } = gridOrigin(grid);
    let onDisk = 0, onDiskCount = 0, centre = 0;
    for (let k = 0; k < map.length; k++) {
      const x = x0 + (k % SIZE) * PIXEL, y = y0 + Math.floor(k / SIZE) * PIXEL;
      if (Math.hypot(x - FALSE_DISK.cx, y - FALSE_DISK.cy) < FALSE_DISK.r - 3) [onDisk, onDiskCount] = [onDisk + map[k], onDiskCount + 1];
      if (Math.hypot(x, y) < 50) centre = Math.max(centre, map[k]);
    }
    expect(onDisk / onDiskCount).toBeGreaterThan(0.9);
    // Within 50 mm of the isocentre the disk (124 mm out) subtends (2 r / d) / pi <= 0.10 of the
    // directions at d >= 74 mm; the flags' channel averaging widens its shadow a little (measured 0.11).
    expect(centre).toBeLessThan(0.15);
    expect(out.network.bytes).toBe(image.data.byteLength + direct.residual.byteLength + direct.profiles.flagged.byteLength + map.byteLength);
  });

  it('the data-residual figures read off the report match a separate re-projection', async () => {
    const image = { grid, data: diskImage({ cx: 0, cy: 0, r: 150, value: 0.02 }, grid), quantity: 'mu' as const };
    const fromReport = dataResidualOf(await consistencyReport(ws, scan, image));
    const separate = await dataResidual(ws, image, scan);
    expect(fromReport.rays).toBe(separate.rays);
    expect(fromReport.worstView).toBe(separate.worstView);
    for (const k of ['rms', 'relative', 'bias', 'maxAbs', 'worstViewRms'] as const) expect(fromReport[k]).toBeCloseTo(separate[k], 5);
    fromReport.perViewRms.forEach((v, i) => { expect(v).toBeCloseTo(separate.perViewRms[i], 5); });
  });

  it('a run cancelled while the output is checked stores nothing', async () => {
    const { store, ctx, scanId, modelId } = await setUp();
    const ctl = new AbortController();
    const err = await runNetworkPriorJob(ctx, { scanId, modelId, dataConsistent: false }, {
      signal: ctl.signal,
      onProgress: (_, s) => (s === 'reprojection' ? ctl.abort() : undefined),
    }).catch((e) => e);
    expect(err).toBeInstanceOf(CancelledError);
    expect((await allKeys(store)).map(String).filter((k) => k.startsWith('result'))).toEqual([]);
  });

  it('refuses a cone-beam scan and bad requests with the reason', async () => {
    const g = cone({ channels: 16, rows: 8, pitch: 1, views: 12 });
    const { ctx, scanId, modelId } = await setUp({ geometry: g, data: new Float32Array(16 * 8 * 12) });
    await expect(runNetworkPriorJob(ctx, { scanId, modelId, dataConsistent: false })).rejects.toThrow(/network prior: scan "thorax" has 8 detector rows \(cone beam\); the network prior works on 2D scans/);
    const err = await runNetworkPriorJob(ctx, { scanId, modelId, dataConsistent: false, grid: { size: 5, pixel: 1 } }).catch((e) => e);
    expect(err).toBeInstanceOf(InputError);
    expect(err.message).toMatch(/grid\.size: got 5/);
    await expect(runNetworkPriorJob(ctx, { scanId, modelId, dataConsistent: true, iterations: 0 })).rejects.toThrow(/iterations: got 0, expected a whole number from 1 to 10000/);
  });
});
