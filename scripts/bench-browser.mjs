// npm run bench:browser: the clinical-size cone-beam case in the real page (Debian's Chromium,
// served cross-origin isolated) and in the command line, on the same files. A simulated C-arm
// scan of 400 views x 1024 x 768 cells, uint16 TIFF frames with a flat field (about 630 MB,
// made here, never committed), is imported into the page (streamed into chunked storage) and
// reconstructed by FDK into 512^3 voxels of 0.5 mm; the command line reconstructs the frame
// folder the same way. Figures: import and FDK times, the peak memory of the page's renderer
// process (the tab and its workers; VmHWM as Linux reports it) and of every Chromium process,
// the page's JavaScript and WebAssembly memory as Chromium measures it
// (performance.measureUserAgentSpecificMemory), the command line's peak resident memory, and the
// largest difference between the page's volume and the command line's.
// Usage: node scripts/bench-browser.mjs [--views N --channels N --rows N --pitch mm --size N --voxel mm]
import { spawn, execSync } from 'node:child_process';
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { chromium } from 'playwright-core';
import { writeCarmFrames } from './carm-frames.mjs';
import { serveDirectory } from './serve-page.mjs';

const root = resolve(import.meta.dirname, '..');
const arg = (name, fallback) => {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? Number(process.argv[i + 1]) : fallback;
};
const P = { views: arg('views', 400), channels: arg('channels', 1024), rows: arg('rows', 768), pitch: arg('pitch', 0.4), size: arg('size', 512), voxel: arg('voxel', 0.5) };
const FLAGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];
const MB = 2 ** 20;
const log = (s) => process.stderr.write(`${s}\n`);

/** Peak and current resident memory of a process, MB (Linux /proc). */
function memoryOf(pid) {
  try {
    const s = readFileSync(`/proc/${pid}/status`, 'utf8');
    return { peak: Number(/VmHWM:\s*(\d+)/.exec(s)[1]) / 1024, now: Number(/VmRSS:\s*(\d+)/.exec(s)[1]) / 1024 };
  } catch {
    return undefined;
  }
}

/** Processor seconds (user + system, all threads) a process has used so far (Linux /proc; 100 ticks a second). */
function cpuSecondsOf(pid) {
  try {
    const f = readFileSync(`/proc/${pid}/stat`, 'utf8').replace(/^.*\) /, '').split(' ');
    return (Number(f[11]) + Number(f[12])) / 100;
  } catch {
    return undefined;
  }
}

/** Chromium's processes below this one: pid and role (renderer, gpu, utility, browser). */
function chromiumProcesses() {
  const rows = execSync('ps -eo pid=,ppid=,args=', { encoding: 'utf8' }).trim().split('\n').map((l) => {
    const m = /^\s*(\d+)\s+(\d+)\s+(.*)$/.exec(l);
    return { pid: Number(m[1]), ppid: Number(m[2]), args: m[3] };
  });
  const mine = new Set([process.pid]);
  let grew = true;
  while (grew) {
    grew = false;
    for (const r of rows) if (mine.has(r.ppid) && !mine.has(r.pid)) { mine.add(r.pid); grew = true; }
  }
  return rows.filter((r) => mine.has(r.pid) && /chrom/.test(r.args)).map((r) => ({ pid: r.pid, role: /--type=(\S+)/.exec(r.args)?.[1] ?? 'browser' }));
}

/** Runs the CLI, polling its peak resident memory and processor time; resolves to seconds, peak MB and processor seconds (to the last poll). */
function runCli(args) {
  return new Promise((resolveRun, reject) => {
    const t0 = performance.now();
    const child = spawn(process.execPath, [join(root, 'bin/rimfill.js'), ...args], { stdio: ['ignore', 'pipe', 'inherit'] });
    let peak = 0, cpu = 0, out = '';
    const poll = setInterval(() => {
      peak = Math.max(peak, memoryOf(child.pid)?.peak ?? 0);
      cpu = cpuSecondsOf(child.pid) ?? cpu;
    }, 100);
    child.stdout.on('data', (d) => { out += d; });
    child.on('exit', (code) => {
      clearInterval(poll);
      if (code !== 0) reject(new Error(`rimfill ${args[0]} exited with ${code}`));
      else resolveRun({ seconds: (performance.now() - t0) / 1000, peakMb: peak, cpuSeconds: cpu, json: JSON.parse(out) });
    });
  });
}

/** The compare page: the page's stored volume against the command line's file, slab by slab, streamed. */
const COMPARE_PAGE = `<!doctype html><meta charset="utf-8"><title>compare</title><script>
window.compare = async (resultId) => {
  const db = await new Promise((ok, no) => { const o = indexedDB.open('rimfill'); o.onsuccess = () => ok(o.result); o.onerror = () => no(o.error); });
  const keys = await new Promise((ok) => { const r = db.transaction('records').objectStore('records').getAllKeys(IDBKeyRange.bound('result-volume/' + resultId + '/', 'result-volume/' + resultId + '/\\uffff')); r.onsuccess = () => ok(r.result); });
  const reader = (await fetch('cli.nrrd')).body.getReader();
  let pending = new Uint8Array(0), headerDone = false;
  const more = async () => { const { value, done } = await reader.read(); if (done) throw new Error('cli.nrrd ended early'); const n = new Uint8Array(pending.length + value.length); n.set(pending); n.set(value, pending.length); pending = n; };
  let header = '';
  while (!headerDone) { await more(); for (let i = 0; i + 1 < pending.length; i++) if (pending[i] === 10 && pending[i + 1] === 10) { header = new TextDecoder().decode(pending.slice(0, i)); pending = pending.slice(i + 2); headerDone = true; break; } }
  // The file is in the LPS frame (rows from anterior to posterior); the page stores Rimfill's order: rows pair up reversed.
  if (!/space: left-posterior-superior/.test(header)) throw new Error('cli.nrrd does not name the LPS frame');
  const [nx, ny] = /sizes: (\\d+) (\\d+)/.exec(header).slice(1).map(Number);
  let worst = 0, scale = 0, ss = 0, n = 0;
  for (const key of keys) {
    const slab = await new Promise((ok) => { const r = db.transaction('records').objectStore('records').get(key); r.onsuccess = () => ok(r.result.data); });
    while (pending.length < slab.length * 4) await more();
    const cli = new Float32Array(pending.slice(0, slab.length * 4).buffer);
    pending = pending.slice(slab.length * 4);
    for (let i = 0; i < slab.length; i++) {
      const x = i % nx, j = Math.floor(i / nx) % ny, k = Math.floor(i / (nx * ny));
      const c = cli[(k * ny + ny - 1 - j) * nx + x];
      const d = slab[i] - c; worst = Math.max(worst, Math.abs(d)); scale = Math.max(scale, Math.abs(c)); ss += d * d; n++;
    }
  }
  db.close();
  return { worst, scale, rms: Math.sqrt(ss / n), voxels: n };
};
</script>`;

async function main() {
  const work = mkdtempSync(join(tmpdir(), 'rimfill-bench-browser-'));
  const out = { problem: `${P.views} views of ${P.channels} x ${P.rows} uint16 cells (${P.pitch} mm), FDK to ${P.size}^3 voxels of ${P.voxel} mm`, loadBefore: loadavg()[0] };
  try {
    log(`bench:browser: ${out.problem}; making the frames in ${work}`);
    let t = performance.now();
    const s = writeCarmFrames(join(work, 'scan'), { views: P.views, channels: P.channels, rows: P.rows, pitch: P.pitch, spanDeg: 200 });
    rmSync(s.lines);
    const frameBytes = readdirSync(s.framesDir).reduce((a, f) => a + statSync(join(s.framesDir, f)).size, 0);
    out.framesMb = frameBytes / MB;
    log(`frames: ${(frameBytes / MB).toFixed(0)} MB in ${((performance.now() - t) / 1000).toFixed(0)} s`);
    const recipe = ['--method', 'fbp', '--size', String(P.size), '--pixel', String(P.voxel), '--slices', String(P.size), '--slice-spacing', String(P.voxel), '--workers', '2'];
    // The command line on the frame folder.
    const site = join(work, 'site');
    mkdirSync(site);
    copyFileSync(join(root, 'dist/index.html'), join(site, 'index.html'));
    writeFileSync(join(site, 'compare.html'), COMPARE_PAGE);
    const cli = await runCli(['reconstruct', s.framesDir, '--geometry', s.geometry, '--flat', s.flat, ...recipe, '--out', join(site, 'cli.nrrd'), '--json']);
    out.cli = { seconds: cli.seconds, cpuSeconds: cli.cpuSeconds, peakRssMb: cli.peakMb, timings: cli.json.report.timings, memoryEstimateMb: cli.json.memory.estimateMb, loadAfter: loadavg()[0] };
    log(`command line: ${cli.seconds.toFixed(1)} s (processor time ${cli.cpuSeconds.toFixed(1)} s), peak resident memory ${cli.peakMb.toFixed(0)} MB`);
    // The page.
    const server = await serveDirectory(site);
    const profile = mkdtempSync(join(tmpdir(), 'rimfill-bench-profile-'));
    const context = await chromium.launchPersistentContext(profile, { executablePath: execSync('command -v chromium', { encoding: 'utf8', shell: '/bin/bash' }).trim(), args: FLAGS, viewport: { width: 1440, height: 1000 } });
    try {
      const page = await context.newPage();
      await page.goto(server.url);
      await page.locator('header .engine').filter({ hasText: 'shared memory' }).waitFor({ timeout: 60_000 });
      await page.locator('rf-scan-library li').first().waitFor({ timeout: 180_000 }); // the first visit's demo scan
      const samples = [];
      const sampler = setInterval(() => {
        for (const p of chromiumProcesses()) {
          const m = memoryOf(p.pid);
          if (m) samples.push({ ...p, ...m });
        }
      }, 250);
      const files = [...Array.from({ length: P.views }, (_, v) => join(s.framesDir, `frame${v + 1}.tif`)), s.flat, s.geometry];
      t = performance.now();
      await page.locator('rf-scan-library rf-file-drop input[type="file"]').setInputFiles(files);
      await page.locator('rf-scan-library li').filter({ hasText: 'frame1.tif' }).waitFor({ timeout: 30 * 60_000 });
      out.pageImportSeconds = (performance.now() - t) / 1000;
      out.loadAfterImport = loadavg()[0];
      log(`page import: ${out.pageImportSeconds.toFixed(1)} s`);
      await page.locator('#tab-reconstruct').click();
      await page.locator('#field-method').selectOption('fbp');
      await page.locator('rf-recipe-form input[name="grid"][value="custom"]').check();
      await page.locator('rf-recipe-form input[name="gridSize"]').fill(String(P.size));
      await page.locator('rf-recipe-form input[name="gridPixel"]').fill(String(P.voxel));
      await page.locator('rf-recipe-form input[name="slices"][value="custom"]').check();
      await page.locator('rf-recipe-form input[name="volumeSlices"]').fill(String(P.size));
      await page.locator('rf-recipe-form input[name="volumeSpacing"]').fill(String(P.voxel));
      const uaMemory = [];
      // Each measurement with its breakdown summed by the scope it is attributed to and by type
      // (a SharedArrayBuffer, such as the engine's shared memory, is listed once per agent that
      // holds it, so the sum can exceed what the process holds).
      const measure = setInterval(() => page.evaluate(() => performance.measureUserAgentSpecificMemory().then((m) => {
        const byScope = {};
        for (const e of m.breakdown) {
          const key = `${e.attribution.map((a) => a.scope).join('+') || 'unattributed'} ${e.types.join('+') || 'untyped'}`;
          byScope[key] = (byScope[key] ?? 0) + e.bytes;
        }
        return { bytes: m.bytes, byScope };
      })).then((b) => uaMemory.push(b), () => undefined), 3000);
      const rendererCpu = () => chromiumProcesses().filter((p) => p.role === 'renderer').reduce((sum, p) => sum + (cpuSecondsOf(p.pid) ?? 0), 0);
      const cpu0 = rendererCpu();
      t = performance.now();
      await page.locator('#queue-recipe').click();
      const job = page.locator('rf-run-queue li').last();
      await job.and(page.locator('[data-state="done"], [data-state="failed"]')).waitFor({ timeout: 60 * 60_000 });
      out.pageRunSeconds = (performance.now() - t) / 1000;
      out.pageRunRendererCpuSeconds = rendererCpu() - cpu0;
      out.loadAfterPageRun = loadavg()[0];
      clearInterval(measure);
      clearInterval(sampler);
      if ((await job.getAttribute('data-state')) !== 'done') throw new Error(`page FDK: ${await job.textContent()}`);
      const result = await page.evaluate(() => document.querySelector('rf-app').results.at(-1));
      out.page = { runSeconds: out.pageRunSeconds, storedSeconds: result.seconds, timings: result.report.timings, residual: result.residual?.sampled ?? 'every ray' };
      const renderer = Math.max(...samples.filter((x) => x.role === 'renderer').map((x) => x.peak));
      const byProcess = new Map();
      for (const x of samples) byProcess.set(x.pid, { role: x.role, peak: Math.max(byProcess.get(x.pid)?.peak ?? 0, x.peak) });
      out.page.rendererPeakMb = renderer;
      out.page.allChromiumPeaksMb = [...byProcess.values()].map((p) => ({ role: p.role, peakMb: Math.round(p.peak) }));
      const uaPeak = uaMemory.reduce((a, b) => (a && a.bytes >= b.bytes ? a : b), null);
      out.page.measuredUserAgentMemoryPeakMb = uaPeak ? uaPeak.bytes / MB : null;
      out.page.measuredUserAgentMemoryPeakByScopeMb = uaPeak ? Object.fromEntries(Object.entries(uaPeak.byScope).map(([k, v]) => [k, Math.round(v / MB)])) : null;
      log(`page FDK: ${out.pageRunSeconds.toFixed(1)} s (renderers' processor time ${out.pageRunRendererCpuSeconds.toFixed(1)} s); renderer peak ${renderer.toFixed(0)} MB`);
      const cmp = await context.newPage();
      await cmp.goto(`${server.url}compare.html`);
      out.pageAgainstCli = await cmp.evaluate((id) => window.compare(id), result.id);
      log(`page against command line: largest difference ${out.pageAgainstCli.worst} of ${out.pageAgainstCli.scale}`);
    } finally {
      await context.close();
      await server.close();
      rmSync(profile, { recursive: true, force: true });
    }
    out.loadAfter = loadavg()[0];
    mkdirSync(join(root, 'test-artifacts'), { recursive: true });
    writeFileSync(join(root, 'test-artifacts/bench-browser.json'), JSON.stringify(out, null, 2));
    console.log(JSON.stringify(out, null, 2));
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
