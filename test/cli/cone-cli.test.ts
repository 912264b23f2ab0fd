import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { main } from '../../web/cli/main';
import { readVolumeNrrd } from '../../web/core/formats/volume-nrrd';
import { sheppLogan3d } from '../../web/core/phantoms/shepp-logan-3d';
import { sliceAt } from '../../web/core/volume';
import { regionMeans3d } from '../helpers/regions';

/** Runs the CLI in-process; returns the exit code and what it printed. */
async function rimfill(...argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '', err = '';
  const so = vi.spyOn(process.stdout, 'write').mockImplementation((s) => ((out += String(s)), true));
  const se = vi.spyOn(process.stderr, 'write').mockImplementation((s) => ((err += String(s)), true));
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
    const truth = await readVolumeNrrd(readFileSync(f('truth.nrrd')));
    expect(truth.grid.nz).toBeGreaterThan(50);

    const args = ['reconstruct', f('scan.nrrd'), '--method', 'fbp', '--size', '64', '--pixel', '3', '--slices', '60', '--slice-spacing', '3', '--json'];
    const local = await rimfill(...args, '--out', f('local.nrrd'), '--workers', '0');
    expect(local.code, local.err).toBe(0);
    expect(JSON.parse(local.out).grid).toMatchObject({ nx: 64, ny: 64, nz: 60, dz: 3 });
    const pool = await rimfill(...args, '--out', f('pool.nrrd'), '--workers', '2');
    expect(pool.code, pool.err).toBe(0);
    const a = await readVolumeNrrd(readFileSync(f('local.nrrd')));
    const b = await readVolumeNrrd(readFileSync(f('pool.nrrd')));
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
});
