// The page's DICOM export (coordinator op "export-dicom", fake-indexeddb): a stored 2D result
// gives one .dcm, a cone-beam result's volume a ZIP of one file per slice; both read back by
// Rimfill's DICOM reader in HU (HU = 1000 (mu - mu_water) / mu_water, ICRP Publication 129) at
// the result's grid, and the ZIP by fflate. A result without mu_water is refused.
import 'fake-indexeddb/auto';
import { unzipSync } from 'fflate';
import { createStore } from 'idb-keyval';
import * as dicomParser from 'dicom-parser';
import { describe, expect, it } from 'vitest';
import { readDicomSeries } from '../../web/core/formats/dicom';
import { writeVolumeNrrd } from '../../web/core/formats/volume-nrrd';
import { saveScan } from '../../web/store/scans';
import { Coordinator } from '../../web/worker/coordinator';
import { cone as smallCone } from '../helpers/cone';
import { localWorkspace } from '../helpers/engine';

let n = 0;
function coordinator() {
  const store = createStore(`export-dicom-${n++}`, 'records');
  return { store, c: new Coordinator({ openWorkspace: () => localWorkspace(1), sharedMemory: false, store }) };
}

const bytesOf = async (b: Blob) => new Uint8Array(await b.arrayBuffer());

describe('DICOM export in the page', () => {
  it('a volume result: a ZIP of one DICOM file per slice, in HU, named by the result', async () => {
    const { c, store } = coordinator();
    const g = smallCone({ channels: 16, rows: 8, pitch: 1, views: 12 });
    const s = await saveScan({ name: 'c-arm', scan: { geometry: g, data: new Float32Array(16 * 8 * 12), muWater: 0.02 }, source: { type: 'file', fileNames: [] } }, store);
    const vgrid = { nx: 8, ny: 6, nz: 4, dx: 1, dy: 1, dz: 2, cx: 0, cy: 0, cz: 0 };
    const data = Float32Array.from({ length: 8 * 6 * 4 }, (_, i) => 0.02 * (1 + i / 1000));
    const file = new File([(await writeVolumeNrrd({ grid: vgrid, data, quantity: 'mu' })) as BlobPart], 'vol.nrrd');
    const r = await c.importImage(s.id, [file], undefined, {});
    const stages: string[] = [];
    const out = await c.handle({ op: 'export-dicom', resultId: r.id }, { onProgress: (_, stage) => stages.push(stage) });
    expect(out.kind).toBe('zip');
    expect(out.slices).toBe(4);
    expect(stages).toContain('encoding DICOM');
    const entries = unzipSync(await bytesOf(out.blob));
    const names = Object.keys(entries).sort();
    expect(names).toEqual([1, 2, 3, 4].map((k) => `${r.name.replace(/[^\w.-]+/g, '-')}/CT000${k}.dcm`));
    const back = readDicomSeries(names.map((name) => ({ name, bytes: entries[name] }))).volume;
    expect([back.nx, back.ny, back.nz]).toEqual([8, 6, 4]);
    expect(back.origin[2]).toBeCloseTo(-3, 6);
    // mu = 0.02 (1 + i / 1000) is HU = i.
    for (let i = 0; i < data.length; i++) expect(Math.abs(back.data[i] - i)).toBeLessThanOrEqual(0.5);
    expect(dicomParser.parseDicom(entries[names[0]]).string('x0008103e')).toBe(r.name.slice(0, 64));
  });

  it('a 2D result: one .dcm; without mu_water: refused', async () => {
    const { c, store } = coordinator();
    const geometry = { kind: 'parallel' as const, detector: { shape: 'flat' as const, channels: 32, rows: 1, pitch: [2, 2] as [number, number], offset: [0, 0] as [number, number] }, anglesDeg: { start: 0, step: 6, count: 30 } };
    const s = await saveScan({ name: 'p', scan: { geometry, data: new Float32Array(32 * 30), muWater: 0.02 }, source: { type: 'file', fileNames: [] } }, store);
    const r = await c.run(s.id, { method: 'fbp', grid: { size: 16, pixel: 2 } }, undefined, {});
    const out = await c.handle({ op: 'export-dicom', resultId: r.id });
    expect(out.kind).toBe('dcm');
    const back = readDicomSeries([{ name: 'x.dcm', bytes: await bytesOf(out.blob) }]).volume;
    expect([back.nx, back.ny, back.nz]).toEqual([16, 16, 1]);
    for (const v of back.data) expect(v).toBe(-1000); // no data: mu 0 everywhere is air
    const none = await saveScan({ name: 'q', scan: { geometry, data: new Float32Array(32 * 30) }, source: { type: 'file', fileNames: [] } }, store);
    const r2 = await c.run(none.id, { method: 'fbp', grid: { size: 16, pixel: 2 } }, undefined, {});
    await expect(c.handle({ op: 'export-dicom', resultId: r2.id })).rejects.toThrow(/mu_water is unknown, so its values cannot be written in HU/);
  });

  it('a DBP result: the note says how many pixels hold air as a fill (DICOM has no mark for them)', async () => {
    const { c, store } = coordinator();
    // 32 channels of 2 mm measure a disk of radius 32 mm; the 32 x 2 mm grid's corners reach 44 mm.
    const geometry = { kind: 'parallel' as const, detector: { shape: 'flat' as const, channels: 32, rows: 1, pitch: [2, 2] as [number, number], offset: [0, 0] as [number, number] }, anglesDeg: { start: 0, step: 6, count: 30 } };
    const s = await saveScan({ name: 'p', scan: { geometry, data: new Float32Array(32 * 30), muWater: 0.02 }, source: { type: 'file', fileNames: [] } }, store);
    const r = await c.run(s.id, { method: 'dbp', grid: { size: 32, pixel: 2 } }, undefined, {});
    const unset = (r.report.dbp as { undetermined: { pixels: number } }).undetermined.pixels;
    expect(unset).toBeGreaterThan(0);
    const out = await c.handle({ op: 'export-dicom', resultId: r.id });
    expect(out.warnings[0]).toBe(`${unset} pixels are not determined by this result (DBP) and hold air (-1000 HU) as a fill, not a measurement: DICOM has no mark for them; export the not-determined mask (NRRD) beside it`);
  });
});
