// Nothing lost to a typo: every command that writes checks its outputs (folder exists, is a
// folder, the output is not a folder, no two outputs share a path) before it reads an input or
// computes anything, and reports a file it replaced. simulate lists what it wrote with the
// sizes, announces a large write before the work, and by default writes the truth on the grid
// reconstruct picks, so compare needs no resampling.
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, describe, expect, it, vi } from 'vitest';
import { calibrate } from '../../web/cli/commands/calibrate';
import { compare } from '../../web/cli/commands/compare';
import { DEMO_DIR, demo } from '../../web/cli/commands/demo';
import { exportCommand } from '../../web/cli/commands/export';
import { priorCheck } from '../../web/cli/commands/prior-check';
import { reconstruct } from '../../web/cli/commands/reconstruct';
import { simulate } from '../../web/cli/commands/simulate';
import { main } from '../../web/cli/main';
import { formatSize } from '../../web/core/sizes';
import { InputError } from '../../web/core/errors';

const dir = mkdtempSync(join(tmpdir(), 'rimfill-outputs-'));
const f = (name: string) => join(dir, name);
afterAll(() => rmSync(dir, { recursive: true, force: true }));
afterEach(() => vi.restoreAllMocks());

// A small fan-beam scan, truncated: 120 of 200 channels.
writeFileSync(f('geom.json'), JSON.stringify({
  kind: 'fan', detector: { shape: 'flat', channels: 200, rows: 1, pitch: [2, 2], offset: [0, 0] },
  sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 4, count: 90 },
}));
const missing = join(dir, 'no-such-folder', 'out.nrrd');
const nowhere = join(dir, 'no-such-input.nrrd');

/** Runs the CLI in-process; returns the exit code and what it printed. */
async function rimfill(...argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '', err = '';
  vi.spyOn(process.stdout, 'write').mockImplementation((s) => {
    out += String(s);
    return true;
  });
  vi.spyOn(process.stderr, 'write').mockImplementation((s) => {
    err += String(s);
    return true;
  });
  try {
    return { code: await main(argv), out, err };
  } finally {
    vi.restoreAllMocks();
  }
}

describe('outputs are checked before any work', () => {
  // The input does not exist either: a command that read it before checking its output would
  // name the input. Naming the output's folder shows the check comes first.
  it.each([
    ['simulate', () => simulate(['--phantom', 'water', '--geometry', join(dir, 'no-such-geometry.json'), '--out', missing])],
    ['simulate --truth', () => simulate(['--phantom', 'water', '--geometry', f('geom.json'), '--out', f('s.nrrd'), '--truth', missing])],
    ['reconstruct', () => reconstruct([nowhere, '--method', 'sart', '--iterations', '500', '--out', missing])],
    ['export', () => exportCommand([nowhere, '--to', missing.replace('.nrrd', '.png'), '--window', '400', '--level', '40'])],
    ['calibrate', () => calibrate([nowhere, '--circle', '0,0,10', '--scan', nowhere, '--out', missing])],
    ['prior-check', () => priorCheck([nowhere, '--prior', nowhere, '--residual', missing])],
  ])('%s: a missing output folder is named, before the input is read', async (_, run) => {
    const err = await run().then(() => undefined, (e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as Error).message).toMatch(/the folder .*no-such-folder does not exist/);
  });

  it('exit 2 with one line, in well under a second (it fails before the reconstruction starts)', async () => {
    await simulate(['--phantom', 'shepp-logan', '--geometry', f('geom.json'), '--channels', '120', '--out', f('scan.nrrd')]);
    const t0 = performance.now();
    const r = await rimfill('reconstruct', f('scan.nrrd'), '--method', 'sart', '--iterations', '500', '--out', missing);
    const seconds = (performance.now() - t0) / 1000;
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/^rimfill reconstruct: option --out: the folder .*no-such-folder does not exist; create it first or choose another\n$/);
    expect(r.out).toBe('');
    // Loose bound, not a speed target: 500 SART iterations on this scan take many seconds; the
    // check itself is a few file-system calls.
    expect(seconds).toBeLessThan(5);
  });

  it('refuses an output that is a folder, a folder that is a file, and two outputs on one path', async () => {
    writeFileSync(f('plain.txt'), 'x');
    const run = (argv: string[]) => simulate(['--phantom', 'water', '--geometry', f('geom.json'), ...argv]);
    await expect(run(['--out', dir])).rejects.toThrow(/option --out: .* is a folder; give a file name inside it/);
    await expect(run(['--out', join(f('plain.txt'), 'x.nrrd')])).rejects.toThrow(/option --out: .*plain\.txt is not a folder/);
    await expect(run(['--out', f('a.nrrd'), '--truth', f('a.nrrd')])).rejects.toThrow(/options --out and --truth both name .*a\.nrrd/);
  });

  it('reports an output it replaced', async () => {
    const args = [f('scan.nrrd'), '--method', 'fbp', '--size', '32', '--pixel', '8', '--out', f('replaced.nrrd'), '--workers', '0'];
    expect((await reconstruct(args)).warnings ?? []).not.toContainEqual(expect.stringMatching(/replaced/));
    expect((await reconstruct(args)).warnings).toContain(`replaced the existing file ${f('replaced.nrrd')}`);
  });

  it(`the demo's default folder (${DEMO_DIR}) is covered by the repository's .gitignore`, async () => {
    const ignored = readFileSync(new URL('../../.gitignore', import.meta.url), 'utf8').split('\n').map((l) => l.trim());
    expect(ignored.some((l) => l === `/${DEMO_DIR}/` || l === `${DEMO_DIR}/`)).toBe(true);
    await expect(demo(['--dir', join(f('plain.txt'), 'demo')])).rejects.toThrow(/option --dir: cannot create or write the folder/);
  });
});

describe('simulate reports what it writes', () => {
  it('lists every file written with its size', async () => {
    const r = await simulate(['--phantom', 'shepp-logan', '--geometry', f('geom.json'), '--channels', '120', '--out', f('list-scan.nrrd'),
      '--truth', f('list-truth.nrrd'), '--complete', f('list-full.nrrd'), '--size', '64', '--pixel', '4']);
    const lines = r.text.split('\n');
    expect(lines).toHaveLength(3);
    for (const [line, name, what] of [[lines[0], 'list-scan.nrrd', 'scan, 90 views x 120 channels'], [lines[1], 'list-full.nrrd', 'complete scan, 90 views x 200 channels'],
      [lines[2], 'list-truth.nrrd', 'ground truth, 64 x 64 pixels of 4 mm']]) {
      expect(line).toContain(`wrote ${f(name)} (${formatSize(statSync(f(name)).size)}): ${what}`);
    }
    const files = (r.json as { files: Array<{ path: string; bytes: number }> }).files;
    expect(files.map((x) => [x.path, x.bytes])).toEqual([f('list-scan.nrrd'), f('list-full.nrrd'), f('list-truth.nrrd')].map((p) => [p, statSync(p).size]));
  });

  it('announces a large write before the work, with the option that makes it smaller', async () => {
    const said: Array<{ text: string; written: boolean }> = [];
    const warn = (text: string) => said.push({ text, written: (() => { try { return statSync(f('big-truth.nrrd')).size > 0; } catch { return false; } })() });
    await simulate(['--phantom', 'water', '--geometry', f('geom.json'), '--out', f('big-scan.nrrd'), '--truth', f('big-truth.nrrd'), '--size', '96', '--pixel', '3'],
      { warnAboveBytes: 30_000, warn });
    expect(said).toHaveLength(1);
    expect(said[0].written).toBe(false);
    // The scan (90 x 200 float32, 72 kB) and the truth (96 x 96 float32, 37 kB), each with what makes it smaller.
    expect(said[0].text).toMatch(/^about to write 109 kB \(more than 30 kB\): .*big-scan\.nrrd 72 kB \(smaller: a geometry with fewer views or channels\); .*big-truth\.nrrd 37 kB \(smaller: --size N --pixel mm/);
    const quiet = vi.fn();
    await simulate(['--phantom', 'water', '--geometry', f('geom.json'), '--out', f('small-scan.nrrd')], { warn: quiet });
    expect(quiet).not.toHaveBeenCalled();
  });

  it('writes the truth on the grid reconstruct picks by default: compare needs no resampling (fan and cone beam)', async () => {
    await simulate(['--phantom', 'thorax', '--geometry', f('geom.json'), '--channels', '120', '--photons', '1e5', '--out', f('d-scan.nrrd'), '--truth', f('d-truth.nrrd')]);
    await reconstruct([f('d-scan.nrrd'), '--method', 'fbp', '--extend', 'water', '--out', f('d-image.nrrd'), '--workers', '0']);
    const c = (await compare([f('d-image.nrrd'), '--reference', f('d-truth.nrrd'), '--fov'])).json as { resampled: boolean; notes: string[] };
    expect(c.resampled).toBe(false);
    expect(c.notes.join(' ')).not.toMatch(/resampled/);

    writeFileSync(f('cone.json'), JSON.stringify({
      kind: 'cone', detector: { shape: 'flat', channels: 48, rows: 8, pitch: [4, 4], offset: [0, 0] },
      sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 8, count: 45 },
    }));
    await simulate(['--phantom', 'water', '--geometry', f('cone.json'), '--out', f('c-scan.nrrd'), '--truth', f('c-truth.nrrd')]);
    await reconstruct([f('c-scan.nrrd'), '--method', 'fbp', '--out', f('c-volume.nrrd'), '--workers', '0']);
    const v = (await compare([f('c-volume.nrrd'), '--reference', f('c-truth.nrrd'), '--fov'])).json as { resampled: boolean };
    expect(v.resampled).toBe(false);
  });
});
