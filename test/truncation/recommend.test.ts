// The correction a scan's truncation report suggests (what the page's recipe form starts with
// and `rimfill inspect` prints), and the default grid the page names, which must be the grid a
// recipe without one gets (chooseGrid, as the CLI picks it).
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { inspect } from '../../web/cli/commands/inspect';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { cropDetector } from '../../web/core/geometry/presets';
import { validateGeometry } from '../../web/core/geometry/validate';
import type { EllipsePhantom } from '../../web/core/phantoms/ellipse';
import { chooseGrid } from '../../web/core/recipe/grid';
import type { Scan } from '../../web/core/scan';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { detectTruncation } from '../../web/core/truncation/detect';
import { recommendCorrection } from '../../web/core/truncation/recommend';
import { truncationOverview } from '../../web/core/truncation/overview';
import { defaultGridText } from '../../web/ui/logic/scan-defaults';

// A water cylinder of radius 100 mm (mu 0.02 /mm, common practice for water near 60 keV) in a
// fan beam whose full detector sees all of it.
const water: EllipsePhantom = { name: 'water', muWater: 0.02, radius: 100, ellipses: [{ cx: 0, cy: 0, a: 100, b: 100, phiDeg: 0, value: 0.02 }] };
const full = validateGeometry({ kind: 'fan', detector: { shape: 'flat', channels: 300, pitch: 1.5 }, sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 4, count: 90 } });

function scanOf(channels: number, offsetMm = 0): Scan {
  const { geometry } = cropDetector(full, channels, offsetMm);
  return { geometry, data: analyticSinogram(water, geometry), muWater: water.muWater };
}

const dir = mkdtempSync(join(tmpdir(), 'rimfill-recommend-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('the suggested truncation correction', () => {
  it('is none for a scan that is never cut off', () => {
    const a = recommendCorrection(detectTruncation(scanOf(300)).summary);
    expect(a).toEqual({ extend: 'none', label: 'no correction', reason: 'no view is cut off at the detector edges: nothing to correct' });
  });

  it('is the water cylinder when views are cut off, saying how many, on which side and how far the object reaches', () => {
    // 120 channels of 1.5 mm at magnification 1.8: the FOV radius is 50 mm, the cylinder's 100 mm.
    const both = recommendCorrection(detectTruncation(scanOf(120)).summary);
    expect(both.extend).toBe('water');
    expect(both.label).toBe('water cylinder');
    expect(both.reason).toMatch(/^100% of views are cut off \(both edges\), the object reaching up to (\d+) mm beyond; a water cylinder fitted to each edge/);
    // The object reaches about 100 - 50 = 50 mm beyond the FOV edge (the fit is approximate).
    const reach = Number(/up to (\d+) mm/.exec(both.reason)![1]);
    expect(reach).toBeGreaterThan(35);
    expect(reach).toBeLessThan(65);
    // An offset detector: 200 channels shifted 60 mm towards +u cut off only the -u (left) side.
    const one = recommendCorrection(detectTruncation(scanOf(200, 60)).summary);
    expect(one.reason).toMatch(/\(the left edge only\)/);
  });

  it('rimfill inspect prints it and gives it in the JSON', async () => {
    const scan = scanOf(120);
    writeFileSync(join(dir, 'scan.nrrd'), await writeScanNrrd(scan));
    const text = (await inspect([join(dir, 'scan.nrrd')])).text;
    expect(text).toMatch(/^suggested correction: water cylinder \(--extend water\): 100% of views are cut off/m);
    const json = (await inspect([join(dir, 'scan.nrrd'), '--json'])).json as { recommendation: unknown; summary: Parameters<typeof recommendCorrection>[0] };
    expect(json.recommendation).toEqual(recommendCorrection(json.summary));
  });
});

describe("the page's defaults for a scan", () => {
  it('start the recipe with the suggestion and name the grid reconstruct picks when the recipe has none', () => {
    const scan = scanOf(120);
    const o = truncationOverview(scan);
    expect(o.advice).toEqual(recommendCorrection(o.report.summary));
    expect(o.advice.extend).toBe('water');
    const g = chooseGrid(scan);
    expect(defaultGridText(scan.geometry, o.report.summary.objectRadiusMm)).toBe(`${g.nx} px × ${Number(g.dx.toPrecision(3))} mm`);
  });
});
