// The command line's path for large cone-beam scans, at a small size: a folder of uint16 TIFF
// frames with a flat field read a chunk of views at a time into FDK and the volume written slab
// by slab (the same volume as the whole-file path), binning / view step / row range on reading
// (the same volume as reconstructing a scan simulated on the reduced detector), and the memory
// limit refusing a run before any work, naming the binning that fits.
import { existsSync, mkdirSync, mkdtempSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { writeTiffStack } from '../../web/core/formats/tiff';
import { validateGeometry } from '../../web/core/geometry/validate';
import { sheppLogan3d } from '../../web/core/phantoms/shepp-logan-3d';
import { reducedGeometry } from '../../web/core/reduction';
import { analyticConeProjections } from '../../web/core/simulate/analytic-cone';
import { readVolumeFile } from '../helpers/cone';
import { rimfillHere as rimfill } from '../helpers/cli-in-process';

const geometry = validateGeometry({
  kind: 'cone', detector: { shape: 'flat', channels: 96, rows: 72, pitch: [2.4, 2.4], offset: [0, 0] },
  sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 6, count: 60 },
});
const grid = ['--size', '48', '--pixel', '4', '--slices', '36', '--slice-spacing', '4'];
const I0 = 30000;

function maxRel(a: Float32Array, b: Float32Array): number {
  let d = 0, s = 0;
  for (let i = 0; i < a.length; i++) {
    d = Math.max(d, Math.abs(a[i] - b[i]));
    s = Math.max(s, Math.abs(b[i]));
  }
  return d / s;
}

describe('large cone-beam scans on the command line (small stand-ins)', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'rimfill-large-'));
  const f = (name: string) => join(dir, name);
  const head = sheppLogan3d('modified');
  const lines = await analyticConeProjections(head, geometry);
  writeFileSync(f('geom.json'), JSON.stringify(geometry));
  // Counts I0 exp(-p), rounded to uint16 (Beer-Lambert), one TIFF file per view, flat of I0.
  const counts = lines.map((p) => Math.round(I0 * Math.exp(-p)));
  mkdirSync(f('frames'));
  const frame = 96 * 72;
  for (let v = 0; v < 60; v++) writeFileSync(f(`frames/view${v + 1}.tif`), writeTiffStack({ width: 96, height: 72, frames: 1, data: counts.subarray(v * frame, (v + 1) * frame) }, 'uint16'));
  writeFileSync(f('flat.tif'), writeTiffStack({ width: 96, height: 72, frames: 1, data: new Float32Array(frame).fill(I0) }, 'uint16'));
  // The same counts as line integrals in one NRRD file (read whole: gzip).
  const asLines = counts.map((c) => -Math.log(c / I0));
  writeFileSync(f('scan.nrrd'), await writeScanNrrd({ geometry, data: asLines }, true));

  it('streams a TIFF frame folder into FDK and writes the volume of the whole-file path', async () => {
    const tif = await rimfill(['reconstruct', f('frames'), '--geometry', f('geom.json'), '--flat', f('flat.tif'), '--method', 'fbp', ...grid, '--workers', '2', '--out', f('tif.nrrd'), '--json']);
    expect(tif.code, tif.stderr).toBe(0);
    expect(JSON.parse(tif.stdout).report).toMatchObject({ algorithm: 'fdk', backprojector: 'axial' });
    const whole = await rimfill(['reconstruct', f('scan.nrrd'), '--method', 'fbp', ...grid, '--workers', '1', '--out', f('whole.nrrd')]);
    expect(whole.code, whole.stderr).toBe(0);
    const [a, b] = await Promise.all([readVolumeFile(f('tif.nrrd')), readVolumeFile(f('whole.nrrd'))]);
    expect(a.grid).toEqual(b.grid);
    // The flat-field correction in float32 (TIFF path) against -ln in float64 written to float32.
    expect(maxRel(a.data, b.data)).toBeLessThan(1e-5);
  });

  it('bins, skips views and crops rows on reading, as a scan simulated on the reduced detector', async () => {
    const r = await rimfill(['reconstruct', f('scan.nrrd'), '--bin', '2', '--view-step', '2', '--rows', '4:68', '--method', 'fbp', ...grid, '--out', f('reduced.nrrd'), '--json']);
    expect(r.code, r.stderr).toBe(0);
    const json = JSON.parse(r.stdout);
    expect(json.reduction).toMatchObject({ description: '2 x 2 detector binning, every 2nd view, rows 4 to 67', from: { channels: 96, rows: 72, views: 60 } });
    // The reference: exact projections on the reduced detector, 2 x 2 rays per binned cell.
    const g = reducedGeometry(geometry, { bin: 2, viewStep: 2, rows: [4, 68] });
    writeFileSync(f('reduced-scan.nrrd'), await writeScanNrrd({ geometry: g, data: await analyticConeProjections(head, g, 2) }));
    const ref = await rimfill(['reconstruct', f('reduced-scan.nrrd'), '--method', 'fbp', ...grid, '--out', f('reduced-ref.nrrd')]);
    expect(ref.code, ref.stderr).toBe(0);
    const [a, b] = await Promise.all([readVolumeFile(f('reduced.nrrd')), readVolumeFile(f('reduced-ref.nrrd'))]);
    // uint16 rounding of the counts is all that separates them.
    expect(maxRel(a.data, b.data)).toBeLessThan(0.01);
  });

  it('refuses a run above --memory-limit before any work, naming the binning that fits, and writes nothing', async () => {
    const r = await rimfill(['reconstruct', f('frames'), '--geometry', f('geom.json'), '--flat', f('flat.tif'), '--method', 'sart',
      '--size', '128', '--pixel', '1.5', '--slices', '128', '--slice-spacing', '1.5', '--memory-limit', '400', '--out', f('big.nrrd')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/memory: this run needs about \d+ MB .*more than the budget of 419 MB \(--memory-limit\); with 2 x 2 detector binning and a 64 x 64 x 64 volume of 3\.00 mm voxels it needs about \d+ MB/);
    expect(existsSync(f('big.nrrd'))).toBe(false);
    expect(readdirSync(dir).filter((n) => n.includes('.tmp'))).toEqual([]);
    expect((await rimfill(['reconstruct', f('scan.nrrd'), '--bin', '3', '--method', 'fbp', '--out', f('x.nrrd')])).stderr).toMatch(/option --bin: got 3, expected 1, 2 or 4/);
    expect((await rimfill(['reconstruct', f('scan.nrrd'), '--rows', '10-20', '--method', 'fbp', '--out', f('x.nrrd')])).stderr).toMatch(/option --rows: got "10-20", expected FIRST:END/);
  });
});
