// What the page shows of a stored scan (coordinator op "scan-overview") against `rimfill
// inspect`: the same core function picks a cone-beam scan's analysed row (the one nearest the
// orbit plane, which a vertical detector offset moves away from the middle row) and makes the
// same truncation report; only that row's sinogram reaches the page. The scan: exact projections
// of a water cylinder (REFERENCES.md [ellipsoid-chord]) wider than the detector.
import 'fake-indexeddb/auto';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createStore } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { waterCylinder3d } from '../../web/core/phantoms/thorax-3d';
import { analyticConeProjections } from '../../web/core/simulate/analytic-cone';
import { centralRow, rowScan } from '../../web/core/truncation/central-row';
import { saveScan } from '../../web/store/scans';
import { Coordinator } from '../../web/worker/coordinator';
import { rimfillHere } from '../helpers/cli-in-process';
import { cone } from '../helpers/cone';
import { localWorkspace } from '../helpers/engine';

describe('the analysed row of a cone-beam scan', () => {
  it('is the same in the page and in rimfill inspect, with a vertical detector offset', async () => {
    // 24 rows of 2 mm moved up by 9 mm: the orbit plane meets row 7, not the middle row 12.
    const g = cone({ channels: 48, rows: 24, pitch: 2, views: 36, offset: [0, 9] });
    const scan = { geometry: g, data: await analyticConeProjections(waterCylinder3d(60, 30), g), muWater: 0.02059 };
    expect(centralRow(g)).toBe(7);

    const store = createStore('scan-overview', 'records');
    const c = new Coordinator({ openWorkspace: () => localWorkspace(1), sharedMemory: false, store });
    const meta = await saveScan({ name: 'offset cone', scan, source: { type: 'file', fileNames: [] } }, store);
    const page = await c.handle({ op: 'scan-overview', scanId: meta.id });

    const dir = mkdtempSync(join(tmpdir(), 'rimfill-overview-'));
    writeFileSync(join(dir, 'scan.nrrd'), await writeScanNrrd(scan));
    const cli = await rimfillHere(['inspect', 'scan.nrrd', '--json'], dir);
    expect(cli.code, cli.stderr).toBe(0);
    const inspected = JSON.parse(cli.stdout);

    expect(page.row).toBe(7);
    expect(inspected.analysedRow).toBe(7);
    // The same report (JSON, as the CLI prints it), and the page holds that one row only.
    expect(JSON.parse(JSON.stringify(page.report))).toEqual(JSON.parse(JSON.stringify({ ...inspected, geometry: undefined, fovRadiusMm: undefined, analysedRow: undefined, recommendation: undefined })));
    // The same suggested correction: the page's recipe starts with what inspect prints.
    expect(page.advice).toEqual(inspected.recommendation);
    expect(page.sinogram).toEqual(rowScan(scan, 7).data);
    expect(page.sinogram.length).toBe(36 * 48);
    // The cylinder (radius 60 mm) is wider than the detector (about 53 mm at the isocentre):
    // every view is cut off on both sides, in this row as in the middle one.
    expect(page.report.summary.leftFraction).toBe(1);
    expect(page.report.summary.rightFraction).toBe(1);
  });
});
