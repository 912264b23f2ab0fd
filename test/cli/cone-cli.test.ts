import { existsSync, mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { main } from '../../web/cli/main';
import { writeVolumeNrrd } from '../../web/core/formats/volume-nrrd';
import { readScanFile } from '../../web/core/formats/read-scan';
import { sheppLogan3d } from '../../web/core/phantoms/shepp-logan-3d';
import { sliceAt } from '../../web/core/volume';
import { readVolumeFile } from '../helpers/cone';
import { fixtureF32, fixtureFolder } from '../helpers/fixtures';
import { regionMeans3d } from '../helpers/regions';

/** Runs the CLI in-process; returns the exit code and what it printed. */
async function rimfill(...argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '', err = '';
  const so = vi.spyOn(process.stdout, 'write').mockImplementation((s) => {
    out += String(s);
    return true;
  });
  const se = vi.spyOn(process.stderr, 'write').mockImplementation((s) => {
    err += String(s);
    return true;
  });
  try {
    return { code: await main(argv), out, err };
  } finally {
    so.mockRestore();
    se.mockRestore();
  }
}

afterEach(() => vi.restoreAllMocks());

describe('rimfill CLI with cone-beam scans', () => {
  const dir = mkdtempSync(join(tmpdir(), 'rimfill-cone-'));
  const f = (name: string) => join(dir, name);
  writeFileSync(f('cone.json'), JSON.stringify({
    kind: 'cone', detector: { shape: 'flat', channels: 100, rows: 100, pitch: [4, 4], offset: [0, 0] },
    sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 4, count: 90 },
  }));

  it('simulates a 3D phantom and reconstructs a volume (in-thread and on the worker pool alike)', async () => {
    const sim = await rimfill('simulate', '--phantom', 'shepp-logan-modified', '--geometry', f('cone.json'), '--out', f('scan.nrrd'),
      '--truth', f('truth.nrrd'), '--pixel', '3', '--json');
    expect(sim.code, sim.err).toBe(0);
    expect(JSON.parse(sim.out)).toMatchObject({ views: 90, channels: 100, rows: 100 });
    const truth = await readVolumeFile(f('truth.nrrd'));
    expect(truth.grid.nz).toBeGreaterThan(50);

    const args = ['reconstruct', f('scan.nrrd'), '--method', 'fbp', '--size', '64', '--pixel', '3', '--slices', '60', '--slice-spacing', '3', '--json'];
    const local = await rimfill(...args, '--out', f('local.nrrd'), '--workers', '0');
    expect(local.code, local.err).toBe(0);
    expect(JSON.parse(local.out).grid).toMatchObject({ nx: 64, ny: 64, nz: 60, dz: 3 });
    const pool = await rimfill(...args, '--out', f('pool.nrrd'), '--workers', '2');
    expect(pool.code, pool.err).toBe(0);
    const a = await readVolumeFile(f('local.nrrd'));
    const b = await readVolumeFile(f('pool.nrrd'));
    let worst = 0;
    for (let i = 0; i < a.data.length; i++) worst = Math.max(worst, Math.abs(a.data[i] - b.data[i]));
    expect(worst).toBeLessThan(1e-7);
    // Coarse (3 mm voxels, 4 degree steps) but still right: the brain in the central slice
    // within 3% of the table (Kak & Slaney's head, higher-contrast values, brain 0.2 mu_water).
    const p = sheppLogan3d('modified');
    const m = regionMeans3d(p, a.grid, a.data, sliceAt(a.grid, 0), 1, 6);
    expect(m.n).toBeGreaterThan(100);
    expect(Math.abs(m.rec - m.truth) / m.truth).toBeLessThan(0.03);
    expect(a.fovRadius).toBeGreaterThan(100);
  });

  it('refuses slice options it cannot honour and writes nothing', async () => {
    const half = await rimfill('reconstruct', f('scan.nrrd'), '--method', 'fbp', '--slices', '10', '--out', f('never.nrrd'));
    expect(half.code).toBe(2);
    expect(half.err).toMatch(/--slices and --slice-spacing go together/);
    const sim2d = await rimfill('simulate', '--phantom', 'water', '--geometry', 'demo-parallel', '--slices', '4', '--out', f('never.nrrd'));
    expect(sim2d.code).toBe(2);
    expect(sim2d.err).toMatch(/--slices: only for cone-beam geometries/);
    expect(existsSync(f('never.nrrd'))).toBe(false);
  });

  it('simulates a DICOM series phantom as it simulates the same volume in NRRD', async () => {
    // 12 axial CT slices of 24 x 20 pixels written by pydicom (2 mm, slices 2.5 mm apart, stored =
    // HU + 1024): air with a water ball and a bone block, and the HU it stored in Rimfill's
    // orientation (y anterior: rows reversed) as the reference; committed fixtures made by
    // scripts/reference/dicom_files.py.
    const series = f('series');
    mkdirSync(series);
    for (const { name, bytes } of fixtureFolder('dicom/phantom-series')) writeFileSync(join(series, name), bytes);
    const hu = fixtureF32('dicom/phantom-series.f32');
    const mu = 0.02;
    writeFileSync(f('same.nrrd'), await writeVolumeNrrd({ grid: { nx: 24, ny: 20, nz: 12, dx: 2, dy: 2, dz: 2.5, cx: 0, cy: 0, cz: 0 }, data: hu, quantity: 'hu', muWater: mu }));
    const common = ['--geometry', f('cone.json'), '--mu-water', String(mu), '--json'];
    const fromDicom = await rimfill('simulate', '--phantom', series, ...common, '--out', f('dicom-scan.nrrd'), '--truth', f('dicom-truth.nrrd'));
    expect(fromDicom.code, fromDicom.err).toBe(0);
    const fromNrrd = await rimfill('simulate', '--phantom', f('same.nrrd'), ...common, '--out', f('nrrd-scan.nrrd'));
    expect(fromNrrd.code, fromNrrd.err).toBe(0);
    const truth = await readVolumeFile(f('dicom-truth.nrrd'));
    expect(truth.grid).toMatchObject({ nx: 24, ny: 20, nz: 12, dx: 2, dy: 2, dz: 2.5 });
    expect(truth.grid.cz).toBeCloseTo(0, 9);
    // HU = 1000 (mu - mu_water) / mu_water (REFERENCES.md [hu-definition]).
    let worst = 0;
    for (let i = 0; i < hu.length; i++) worst = Math.max(worst, Math.abs(truth.data[i] - mu * (1 + hu[i] / 1000)));
    expect(worst).toBeLessThan(1e-8);
    const read = async (name: string) => (await readScanFile([{ name, bytes: new Uint8Array(readFileSync(f(name))) }])).scan.data;
    const [a, b] = [await read('dicom-scan.nrrd'), await read('nrrd-scan.nrrd')];
    expect(a.length).toBe(90 * 100 * 100);
    expect(Math.max(...a.subarray(0, 10000))).toBeGreaterThan(0.5);
    let differ = 0;
    for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) differ++;
    expect(differ).toBe(0);
  });
});
