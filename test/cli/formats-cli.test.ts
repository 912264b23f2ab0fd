// The CLI over the formats: raw detector frames (TIFF) with flat/dark and a geometry file
// become a scan, reconstruct, calibrate and export; bad input exits 2 and writes nothing.
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it, vi } from 'vitest';
import { calibrate } from '../../web/cli/commands/calibrate';
import { exportCommand } from '../../web/cli/commands/export';
import { inspect } from '../../web/cli/commands/inspect';
import { reconstruct } from '../../web/cli/commands/reconstruct';
import { main } from '../../web/cli/main';
import { readImageFile } from '../../web/core/formats/read-image';
import { readScanFile } from '../../web/core/formats/read-scan';
import { writeTiffStack } from '../../web/core/formats/tiff';
import { validateGeometry } from '../../web/core/geometry/validate';
import { MU_WATER_60KEV } from '../../web/core/phantoms/materials';
import { waterCylinder } from '../../web/core/phantoms/thorax';
import { analyticSinogram } from '../../web/core/simulate/analytic';

const dir = mkdtempSync(join(tmpdir(), 'rimfill-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const f = (name: string) => join(dir, name);

const geometryJson = {
  kind: 'fan', detector: { shape: 'flat', channels: 300, rows: 1, pitch: [1.0, 1.0] }, sourceIsocenter: 500, sourceDetector: 900,
  anglesDeg: { start: 0, step: 2, count: 180 },
};

function writeFrames(): void {
  // One TIFF per view (a folder of frames), noise-free counts: I = dark + I0 exp(-p).
  const g = validateGeometry(geometryJson);
  const p = analyticSinogram(waterCylinder(70), g, 2);
  mkdirSync(f('frames'));
  for (let v = 0; v < 180; v++) {
    const frame = p.subarray(v * 300, (v + 1) * 300).map((x) => 100 + 50000 * Math.exp(-x));
    writeFileSync(f(`frames/view${v}.tif`), writeTiffStack({ width: 300, height: 1, frames: 1, data: frame }));
  }
  writeFileSync(f('flat.tif'), writeTiffStack({ width: 300, height: 1, frames: 2, data: new Float32Array(600).fill(50100) }));
  writeFileSync(f('geom.json'), JSON.stringify(geometryJson));
}

describe('rimfill with real-data formats', () => {
  it('frames + flat + dark + geometry -> scan -> image -> calibration -> PNG', async () => {
    writeFrames();
    const common = ['--geometry', f('geom.json'), '--flat', f('flat.tif'), '--dark', '100'];
    const ins = await inspect([f('frames'), ...common, '--json']);
    expect((ins.json as { views: unknown[] }).views.length).toBe(180);
    const ex = await exportCommand([f('frames'), '--scan', ...common, '--to', f('scan.nrrd')]);
    expect(ex.warnings).toEqual([]);
    const scan = await readScanFile([{ name: 'scan.nrrd', bytes: new Uint8Array(readFileSync(f('scan.nrrd'))) }]);
    expect(scan.scan.geometry.detector.channels).toBe(300);
    await reconstruct([f('scan.nrrd'), '--method', 'fbp', '--filter', 'hann', '--size', '128', '--pixel', '1.2', '--out', f('mu.nrrd'), '--workers', '0']);
    const cal = await calibrate([f('mu.nrrd'), '--circle', '0,0,30', '--scan', f('scan.nrrd'), '--out', f('calibrated.nrrd')]);
    const muWater = (cal.json as { muWater: number }).muWater;
    expect(Math.abs(muWater - MU_WATER_60KEV) / MU_WATER_60KEV).toBeLessThan(0.01);
    const calibrated = await readScanFile([{ name: 'c.nrrd', bytes: new Uint8Array(readFileSync(f('calibrated.nrrd'))) }]);
    expect(calibrated.scan.muWater).toBe(muWater);
    await reconstruct([f('calibrated.nrrd'), '--method', 'fbp', '--size', '128', '--pixel', '1.2', '--hu', '--out', f('hu.nrrd'), '--workers', '0']);
    const hu = await readImageFile([{ name: 'hu.nrrd', bytes: new Uint8Array(readFileSync(f('hu.nrrd'))) }]);
    expect(hu.volume.quantity).toBe('hu');
    expect(Math.abs(hu.volume.data[64 * 128 + 64])).toBeLessThan(30);
    const png = await exportCommand([f('hu.nrrd'), '--to', f('hu.png'), '--window', '400', '--level', '40']);
    expect(png.text).toMatch(/wrote .*hu.png: 128 x 128/);
    expect(Array.from(readFileSync(f('hu.png')).subarray(1, 4))).toEqual([0x50, 0x4e, 0x47]);
    const int16 = await exportCommand([f('hu.nrrd'), '--to', f('hu16.mhd'), '--int16']);
    expect((int16.json as { written: string[] }).written.map((w) => w.split('/').pop())).toEqual(['hu16.mhd', 'hu16.raw']);
  });

  it('bad input exits 2 with one line naming the problem and writes nothing', async () => {
    const err = vi.spyOn(process.stderr, 'write').mockImplementation(() => true);
    try {
      writeFileSync(f('lie.nrrd'), 'NRRD0004\ntype: float\ndimension: 2\nsizes: 300 180\nencoding: raw\n\n');
      expect(await main(['export', f('lie.nrrd'), '--scan', '--geometry', f('geom.json'), '--to', f('never.nrrd')])).toBe(2);
      expect(String(err.mock.calls.at(-1)?.[0])).toMatch(/promises 216000 bytes/);
      expect(existsSync(f('never.nrrd'))).toBe(false);
      expect(await main(['export', f('hu.nrrd'), '--to', f('never.png')])).toBe(2);
      expect(String(err.mock.calls.at(-1)?.[0])).toMatch(/PNG output needs a window/);
      expect(await main(['inspect', f('frames'), '--geometry', f('geom.json')])).toBe(2);
      expect(String(err.mock.calls.at(-1)?.[0])).toMatch(/intensity data need a flat frame or the unattenuated level \(i0\); give --flat F or --i0 N/);
      expect(existsSync(f('never.png'))).toBe(false);
    } finally {
      err.mockRestore();
    }
  });
});
