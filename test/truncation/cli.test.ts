import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { compare } from '../../web/cli/commands/compare';
import { inspect } from '../../web/cli/commands/inspect';
import { reconstruct } from '../../web/cli/commands/reconstruct';
import { simulate } from '../../web/cli/commands/simulate';
import { InputError } from '../../web/core/errors';

const dir = mkdtempSync(join(tmpdir(), 'rimfill-trunc-'));
const f = (name: string) => join(dir, name);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

// A small parallel-beam scan of the 150 mm water cylinder, collimated to a 120 mm region.
writeFileSync(f('geom.json'), JSON.stringify({ kind: 'parallel', detector: { channels: 240, pitch: 1.5 }, anglesDeg: { start: 0, step: 2, count: 90 } }));

describe('truncation from the command line', () => {
  it('simulate --collimate, inspect --json, reconstruct --extend, compare --scan', async () => {
    const sim = await simulate(['--phantom', 'water', '--geometry', f('geom.json'), '--collimate', '120', '--out', f('scan.nrrd'),
      '--complete', f('full.nrrd'), '--truth', f('truth.nrrd'), '--size', '160', '--pixel', '2', '--workers', '0']);
    // Channels whose rays pass within 60 mm: |u| <= 60 at a 1.5 mm pitch, i.e. 81 channels.
    expect(sim.json).toMatchObject({ channels: 81, views: 90 });
    const ins = (await inspect([f('scan.nrrd'), '--json'])).json as { summary: { truncatedFraction: number; objectRadiusMm: number }; views: Array<{ left: { extentMm: number } }>; mass: { form: string } };
    expect(ins.summary.truncatedFraction).toBe(1);
    expect(ins.views).toHaveLength(90);
    // The cylinder's edge is 150 mm from the isocentre, the collimated edge 60 mm.
    expect(Math.abs(ins.views[0].left.extentMm - 90)).toBeLessThan(5);
    expect(ins.mass.form).toBe('parallel');
    const rec = await reconstruct([f('scan.nrrd'), '--method', 'fbp', '--extend', 'water', '--out', f('rec.nrrd'), '--workers', '0']);
    expect((rec.json as { report: { extension: { method: string } } }).report.extension.method).toBe('water');
    expect((rec.json as { grid: { nx: number; dx: number } }).grid.nx * (rec.json as { grid: { dx: number } }).grid.dx / 2).toBeGreaterThan(150);
    const cmp = (await compare([f('rec.nrrd'), '--reference', f('truth.nrrd'), '--scan', f('scan.nrrd'), '--fov', '--workers', '0'])).json as {
      regions: { insideFov: { rmse: number } }; cupping: { excess: number }; residual: { relative: number };
    };
    expect(cmp.regions.insideFov.rmse).toBeLessThan(40); // HU
    expect(Math.abs(cmp.cupping.excess)).toBeLessThan(0.03);
    // Without extension the image is far from the measured data (bright rim, offset).
    await reconstruct([f('scan.nrrd'), '--method', 'fbp', '--out', f('none.nrrd'), '--workers', '0']);
    const none = (await compare([f('none.nrrd'), '--scan', f('scan.nrrd'), '--workers', '0'])).json as { residual: { relative: number } };
    expect(cmp.residual.relative).toBeLessThan(0.5 * none.residual.relative);
  });

  it('rejects bad options with a clear message and writes nothing', async () => {
    await expect(reconstruct([f('scan.nrrd'), '--method', 'fbp', '--extend', 'linear', '--out', f('bad.nrrd')])).rejects.toThrow(InputError);
    await expect(reconstruct([f('scan.nrrd'), '--method', 'fbp', '--extend', 'linear', '--out', f('bad.nrrd')])).rejects.toThrow(/option --extend: got "linear"/);
    expect(existsSync(f('bad.nrrd'))).toBe(false);
    await expect(simulate(['--phantom', 'water', '--geometry', f('geom.json'), '--channels', '80', '--collimate', '120', '--out', f('bad.nrrd')])).rejects.toThrow(/--channels and --collimate/);
    await expect(simulate(['--phantom', 'water', '--geometry', f('geom.json'), '--collimate', '900', '--out', f('bad.nrrd')])).rejects.toThrow(/collimation: a 900 mm region needs/);
    await expect(compare([f('scan.nrrd')])).rejects.toThrow(/--reference truth.nrrd, --scan scan.nrrd, or both/);
    await expect(inspect([f('scan.nrrd'), '--mu-water', '19'])).rejects.toThrow(/--mu-water: got 19/);
    expect(existsSync(f('bad.nrrd'))).toBe(false);
  });
});
