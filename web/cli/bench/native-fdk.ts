// rimfill bench --only native: the whole `rimfill reconstruct` process against a straightforward
// native FDK (scripts/native-reference/fdk-reference.c: FFTW, OpenMP, gcc -O3 -march=native) on
// the FDK section's problem (256^3 from 360 projections of 512 x 384), both on two cores: the
// CLI with --workers 2, the native build with OMP_NUM_THREADS=2. Three runs of each,
// interleaved, median wall time; processor time too (the machine may be shared: wall times are
// compared within one run, and the load average is reported). The two volumes must agree to
// 0.1% RMS. Without gcc or FFTW the section says what to install instead of failing.
import { spawnSync } from 'node:child_process';
import { closeSync, existsSync, mkdtempSync, openSync, readFileSync, rmSync, writeSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { writeScanNrrd } from '../../core/formats/scan-nrrd';
import { validateGeometry } from '../../core/geometry/validate';
import { sheppLogan3d } from '../../core/phantoms/shepp-logan-3d';
import { analyticConeProjections } from '../../core/simulate/analytic-cone';
import { median, type SectionResult } from './section';

const INSTALL = 'apt-get install -y gcc libfftw3-dev';

interface Timed {
  wall: number;
  cpu: number;
}

export interface NativeFdkFigures {
  problem: string;
  compiler?: string;
  runs: { rimfill: Timed[]; native: Timed[] };
  medianWall: { rimfill: number; native: number };
  medianCpu: { rimfill: number; native: number };
  /** Median wall time of rimfill over that of the native build (target: at most 1). */
  ratio: number;
  /** RMS of the difference over the RMS of the native volume. */
  relativeRms: number;
  loadAverage: { before: number; after: number };
}

/** Runs a command through bash so that `times` reports the children's processor time. */
function timed(cmd: string[], env: NodeJS.ProcessEnv = process.env): Timed {
  const t0 = performance.now();
  const r = spawnSync('bash', ['-c', '"$@" >/dev/null && times', 'bench', ...cmd], { encoding: 'utf8', env, maxBuffer: 16 * 2 ** 20 });
  const wall = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`${cmd[0]} failed: ${(r.stderr || r.stdout).trim().split('\n').slice(-3).join(' ')}`);
  // `times`: the shell's user/system line, then its children's.
  const lines = r.stdout.trim().split('\n');
  const secs = (s: string) => [...s.matchAll(/(\d+)m([\d.]+)s/g)].reduce((a, m) => a + Number(m[1]) * 60 + Number(m[2]), 0);
  return { wall, cpu: secs(lines[lines.length - 1]) };
}

/** Compiles the reference; undefined (and the reason) when the tools are missing. */
function compile(repo: string, dir: string): { binary?: string; reason?: string; compiler?: string } {
  const source = join(repo, 'scripts/native-reference/fdk-reference.c');
  if (!existsSync(source)) return { reason: `the reference source ${source} is missing` };
  const gcc = spawnSync('gcc', ['--version'], { encoding: 'utf8' });
  if (gcc.error || gcc.status !== 0) return { reason: `gcc is not installed (${INSTALL})` };
  const binary = join(dir, 'fdk-reference');
  const flags = ['-O3', '-march=native', '-fopenmp'];
  const r = spawnSync('gcc', [...flags, '-o', binary, source, '-lfftw3f', '-lm'], { encoding: 'utf8' });
  if (r.status !== 0) {
    const missing = /fftw3\.h|lfftw3f/.test(r.stderr) ? `FFTW is not installed (${INSTALL})` : r.stderr.trim().split('\n').slice(-2).join(' ');
    return { reason: `the native reference did not compile: ${missing}` };
  }
  return { binary, compiler: `${gcc.stdout.split('\n')[0]} ${flags.join(' ')}` };
}

/**
 * Relative RMS difference of an NRRD volume (ours, in the LPS frame: rows from anterior to
 * posterior) and a raw float32 volume (the reference, in Rimfill's frame: rows along +y).
 */
function relativeRms(nrrd: string, raw: string): number {
  const a = readFileSync(nrrd), b = readFileSync(raw);
  const end = a.indexOf('\n\n');
  const header = a.subarray(0, end).toString('latin1');
  if (!/^space: left-posterior-superior$/m.test(header)) throw new Error(`${nrrd}: expected a volume in the LPS frame`);
  const [nx, ny] = /^sizes: (\d+) (\d+) \d+$/m.exec(header)!.slice(1).map(Number);
  const x = new Float32Array(a.buffer.slice(a.byteOffset + end + 2, a.byteOffset + a.length));
  const y = new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.length));
  if (x.length !== y.length) throw new Error(`volumes of ${x.length} and ${y.length} voxels`);
  let d2 = 0, r2 = 0;
  for (let i = 0; i < y.length; i++) {
    const col = i % nx, j = Math.floor(i / nx) % ny, k = Math.floor(i / (nx * ny));
    d2 += (x[(k * ny + ny - 1 - j) * nx + col] - y[i]) ** 2;
    r2 += y[i] ** 2;
  }
  return Math.sqrt(d2 / r2);
}

/** The section: figures, or lines saying what to install. */
export async function benchNativeFdk(cliPath: string, log: (line: string) => void): Promise<SectionResult> {
  const repo = resolve(dirname(cliPath), '..');
  const dir = mkdtempSync(join(tmpdir(), 'rimfill-native-'));
  try {
    const built = compile(repo, dir);
    if (!built.binary) return { json: { skipped: built.reason }, lines: [`native FDK reference not run: ${built.reason}`] };
    const geometry = validateGeometry({
      kind: 'cone', detector: { shape: 'flat', channels: 512, rows: 384, pitch: [0.8, 0.8], offset: [0, 0] },
      sourceIsocenter: 750, sourceDetector: 1200, anglesDeg: { start: 0, step: 1, count: 360 },
    });
    const problem = '256^3 volume of 1 mm voxels from 360 views of 512 x 384 cells of 0.8 mm (R 750 mm, D 1200 mm), whole process on 2 cores';
    log(`native: ${problem}`);
    const data = await analyticConeProjections(sheppLogan3d('original'), geometry);
    const bytes = await writeScanNrrd({ geometry, data });
    const scan = join(dir, 'scan.nrrd');
    const fd = openSync(scan, 'w');
    writeSync(fd, bytes);
    closeSync(fd);
    const offset = bytes.length - data.length * 4;
    const ours = join(dir, 'rimfill.nrrd'), theirs = join(dir, 'native.raw');
    const cli = [process.execPath, cliPath, 'reconstruct', scan, '--method', 'fbp', '--size', '256', '--pixel', '1', '--slices', '256', '--slice-spacing', '1', '--workers', '2', '--out', ours];
    const native = [built.binary, scan, String(offset), '512', '384', '360', '0.8', '0.8', '0', '0', '750', '1200', '0', '1', '256', '256', '256', '1', '1', '1', '0', '0', '0', theirs];
    const before = loadavg()[0];
    const runs = { rimfill: [] as Timed[], native: [] as Timed[] };
    for (let r = 0; r < 3; r++) {
      runs.rimfill.push(timed(cli));
      runs.native.push(timed(native, { ...process.env, OMP_NUM_THREADS: '2' }));
      log(`native: run ${r + 1}: rimfill ${runs.rimfill[r].wall.toFixed(2)} s, native ${runs.native[r].wall.toFixed(2)} s`);
    }
    const after = loadavg()[0];
    const med = (k: 'rimfill' | 'native', f: keyof Timed) => median(runs[k].map((t) => t[f]));
    const figures: NativeFdkFigures = {
      problem, compiler: built.compiler, runs,
      medianWall: { rimfill: med('rimfill', 'wall'), native: med('native', 'wall') },
      medianCpu: { rimfill: med('rimfill', 'cpu'), native: med('native', 'cpu') },
      ratio: med('rimfill', 'wall') / med('native', 'wall'),
      relativeRms: relativeRms(ours, theirs),
      loadAverage: { before, after },
    };
    return { json: figures, lines: nativeLines(figures) };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

function nativeLines(f: NativeFdkFigures): string[] {
  const row = (name: string, k: 'rimfill' | 'native') =>
    `${name.padEnd(34)} median ${f.medianWall[k].toFixed(2).padStart(6)} s wall  (runs ${f.runs[k].map((t) => t.wall.toFixed(2)).join(', ')}; processor time ${f.medianCpu[k].toFixed(1)} s)`;
  return [
    `FDK against a straightforward native build: ${f.problem}`,
    `native reference: ${f.compiler}, FFTW, OpenMP`,
    row('rimfill reconstruct --workers 2', 'rimfill'),
    row('native reference, 2 threads', 'native'),
    `ratio rimfill / native (median wall time): ${f.ratio.toFixed(2)} (target: at most 1.00); processor time ratio ${(f.medianCpu.rimfill / f.medianCpu.native).toFixed(2)}`,
    `volumes agree to ${(f.relativeRms * 100).toFixed(4)}% RMS (target: under 0.1%)`,
    `load average (1 min) before ${f.loadAverage.before.toFixed(1)}, after ${f.loadAverage.after.toFixed(1)}, on ${availableParallelism()} cores (other work on the machine slows both alike)`,
  ];
}
