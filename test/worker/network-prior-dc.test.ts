// The network-prior step with its data-consistent step (the page's job, local engine, Node
// runtime, fake-indexeddb). Two test networks return the thorax phantom, one of them with a
// false bright disk inside the field of view: the disk's rays disagree with the data, and the
// prior-guided data-consistent result keeps less than 20% of the disk's contrast (the
// project's acceptance bar: at least 80% of a false structure's contrast removed inside the FOV), because
// inside the FOV the measured data overrule the prior.
import 'fake-indexeddb/auto';
import { createStore } from 'idb-keyval';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Workspace } from '../../web/core/engine/workspace';
import { fovRadius } from '../../web/core/geometry/view-vectors';
import { gridOrigin, squareGrid } from '../../web/core/image';
import { validateModelInfo } from '../../web/core/model/description';
import { networkInputRecipe } from '../../web/core/model/network-input';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { runRecipe } from '../../web/core/recipe/run';
import type { Scan } from '../../web/core/scan';
import { loadConsistency } from '../../web/store/consistency';
import { saveModel } from '../../web/store/models';
import { loadResultImage } from '../../web/store/results';
import { saveScan } from '../../web/store/scans';
import { runNetworkPriorJob, type NetworkPriorOutcome } from '../../web/worker/network-prior-job';
import { contrastKept, diskImage, type Disk } from '../helpers/disk';
import { localWorkspace } from '../helpers/engine';
import { addImageModel, openNetworkNode } from '../helpers/networks';
import { truncatedThoraxScan } from '../helpers/truncated-thorax';

const SIZE = 160, PIXEL = 3.6; // 576 mm: the whole phantom with its arms
const grid = squareGrid(SIZE, PIXEL);
const DISK: Disk = { cx: -30, cy: -20, r: 15, value: 0.01 }; // about +500 HU, inside the FOV (radius 102 mm)
const description = { format: 'rimfill-model/1', input: { name: 'image', quantity: 'mu', size: SIZE, pixel: PIXEL, from: { method: 'fbp', extend: 'water' } }, output: { name: 'prior', quantity: 'mu' } };
const info = validateModelInfo(description);

let ws: Workspace;
let scan: Scan;
let clean: NetworkPriorOutcome, withDisk: NetworkPriorOutcome;
let store: ReturnType<typeof createStore>;

/** Runs the job with a network returning `wanted` for this scan's input. */
async function runWith(name: string, wanted: Float32Array, input: Float32Array, scanId: string): Promise<NetworkPriorOutcome> {
  const onnx = addImageModel(wanted.map((v, i) => v - input[i]), SIZE);
  const model = await saveModel({ name, info, signature: (await openNetworkNode(onnx)).signature, fileNames: { model: `${name}.onnx`, description: `${name}.json` }, warnings: [], onnx, description: JSON.stringify(description) }, store);
  return runNetworkPriorJob({ ws, store, open: (b) => openNetworkNode(b) }, { scanId, modelId: model.id, grid: { size: SIZE, pixel: PIXEL }, dataConsistent: true });
}

beforeAll(async () => {
  ws = await localWorkspace(2);
  store = createStore('prior-dc', 'records');
  const t = truncatedThoraxScan(180);
  scan = t.scan;
  const { id } = await saveScan({ name: 'thorax', scan, source: { type: 'file', fileNames: ['t.nrrd'] } }, store);
  const input = (await runRecipe(ws, scan, networkInputRecipe(info, grid))).image.data;
  const truth = rasterize(t.phantom, grid, 4);
  const disk = diskImage(DISK, grid);
  clean = await runWith('clean', truth, input, id);
  withDisk = await runWith('bright disk', truth.map((v, i) => v + disk[i]), input, id);
}, 600_000);

describe('network prior with the data-consistent step', () => {
  it('stores the data-consistent result with its own consistency report, linked to the network output', async () => {
    const dc = withDisk.consistent!;
    expect(dc.recipe).toMatchObject({ method: 'prior', prior: { source: 'network', resultId: withDisk.network.id } });
    expect(dc.report.priorResultId).toBe(withDisk.network.id);
    const report = await loadConsistency(dc.id, store);
    expect(report!.checkedGrid).toEqual(grid);
  });

  it('the data-consistent result keeps less than 20% of the false disk\'s contrast inside the FOV', async () => {
    expect(Math.hypot(DISK.cx, DISK.cy) + DISK.r).toBeLessThan(fovRadius(scan.geometry));
    const a = (await loadResultImage(clean.consistent!.id, store)).image.data;
    const b = (await loadResultImage(withDisk.consistent!.id, store)).image.data;
    const { kept, pixels } = contrastKept(b, a, DISK, grid);
    expect(pixels).toBeGreaterThan(40);
    // Measured: 0.3% of the contrast kept.
    expect(Math.abs(kept)).toBeLessThan(0.2 * DISK.value);
  });

  it('the disk\'s rays disagree with the data before the step and agree after it', async () => {
    const before = (await loadConsistency(withDisk.network.id, store))!;
    const after = (await loadConsistency(withDisk.consistent!.id, store))!;
    // Before: the disk lights up the disagreement map (disagreement-map.test.ts).
    const { x0, y0 } = gridOrigin(grid);
    let onDisk = 0, count = 0;
    for (let k = 0; k < before.map!.length; k++) {
      if (Math.hypot(x0 + (k % SIZE) * PIXEL - DISK.cx, y0 + Math.floor(k / SIZE) * PIXEL - DISK.cy) < DISK.r - 4) [onDisk, count] = [onDisk + before.map![k], count + 1];
    }
    expect(onDisk / count).toBeGreaterThan(0.9);
    expect(before.report.summary.flaggedRays).toBeGreaterThan(1000);
    // After: the disk leaves no more disagreement than with the network that has none (what
    // remains is the 3.6 mm pixel grid's own misfit of the analytic phantom's projections).
    const cleanAfter = (await loadConsistency(clean.consistent!.id, store))!;
    // Regression pins (the factors 0.1, 1.25, 1.1 and 0.5) over the measured 6718 rays flagged
    // before (2.29%), 140 after (0.99%); without the disk 173 (0.99%).
    expect(after.report.summary.flaggedRays).toBeLessThan(0.1 * before.report.summary.flaggedRays);
    expect(after.report.summary.flaggedRays).toBeLessThanOrEqual(1.25 * cleanAfter.report.summary.flaggedRays + 20);
    expect(after.report.summary.relativeRms).toBeLessThan(1.1 * cleanAfter.report.summary.relativeRms);
    expect(after.report.summary.relativeRms).toBeLessThan(0.5 * before.report.summary.relativeRms);
  });
});
