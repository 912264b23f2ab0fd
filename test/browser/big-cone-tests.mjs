// The page's path for clinical-size cone-beam scans, scaled down so CI checks the mechanism:
// a folder of uint16 TIFF frames with a flat field imported a chunk of views at a time into
// chunked storage, a reload during an import leaving nothing stored, FDK streaming the stored
// chunks with its volume equal to the command line's on the same files, the viewer reading one
// plane at a time, and a run above the memory budget refused with the binning that fits.
// Frames are made here (never committed). The full-size figures are `npm run bench:browser`.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { check } from './harness.mjs';
import { parseFloatNrrd } from './files.mjs';
import { writeCarmFrames } from '../../scripts/carm-frames.mjs';

const JOB_TIMEOUT = 10 * 60_000;

/** Keys in the page's IndexedDB that start with `prefix` (read in the page, the same origin). */
function storedKeys(page, prefix) {
  return page.evaluate((p) => new Promise((resolve, reject) => {
    const open = indexedDB.open('rimfill');
    open.onerror = () => reject(open.error);
    open.onsuccess = () => {
      const tx = open.result.transaction('records', 'readonly');
      const r = tx.objectStore('records').getAllKeys(IDBKeyRange.bound(p, `${p}\uffff`));
      r.onsuccess = () => { resolve(r.result.map(String)); open.result.close(); };
      r.onerror = () => reject(r.error);
    };
  }), prefix);
}

/** Voxels of a stored result's volume, read from its slab records in the page. */
function storedVolume(page, resultId) {
  return page.evaluate((id) => new Promise((resolve, reject) => {
    const open = indexedDB.open('rimfill');
    open.onerror = () => reject(open.error);
    open.onsuccess = () => {
      const store = open.result.transaction('records', 'readonly').objectStore('records');
      const r = store.getAll(IDBKeyRange.bound(`result-volume/${id}/`, `result-volume/${id}/\uffff`));
      r.onsuccess = () => {
        const out = [];
        for (const slab of r.result) out.push(...slab.data);
        resolve(out);
        open.result.close();
      };
      r.onerror = () => reject(r.error);
    };
  }), resultId);
}

/** The files of a frame folder and its flat and geometry, for the page's file picker. */
const folderFiles = (s) => [...Array.from({ length: s.views }, (_, v) => join(s.framesDir, `frame${v + 1}.tif`)), s.flat, s.geometry];

export async function bigConeTests(h, { context, mode, url, root }) {
  const dir = mkdtempSync(join(tmpdir(), 'rimfill-carm-'));
  const page = await context.newPage();
  try {
    // Small: 48 views of 96 x 72 cells (the mechanism); large enough to reload mid-way: 360 views
    // of 512 x 384 (142 MB of frames, a few seconds to store).
    const small = writeCarmFrames(join(dir, 'small'), { views: 48, channels: 96, rows: 72, pitch: 3.2, spanDeg: 200 });
    const slow = writeCarmFrames(join(dir, 'slow'), { views: 360, channels: 512, rows: 384, pitch: 0.6, spanDeg: 200 });
    await page.goto(url);
    await page.locator('header .engine').filter({ hasText: 'engine workers' }).waitFor({ timeout: 60_000 });
    // The demo scan a first visit makes is stored before the imports start.
    await page.locator('rf-scan-library li').first().waitFor({ timeout: 120_000 });
    const scans = () => page.locator('rf-scan-library li').count();

    await h.step(`${mode}: a reload during a streamed TIFF import leaves no partial scan`, async () => {
      const before = await scans();
      await page.locator('rf-scan-library rf-file-drop input[type="file"]').setInputFiles(folderFiles(slow));
      await page.locator('#import-progress').waitFor({ timeout: 30_000 });
      await page.waitForFunction(() => {
        const p = document.querySelector('rf-app')?.shadowRoot?.querySelector('rf-scan-library')?.shadowRoot?.querySelector('#import-progress');
        return /Importing: ([1-9]\d?)% stored/.test(p?.textContent ?? '');
      }, undefined, { timeout: 60_000 });
      await page.reload();
      await page.locator('header .engine').filter({ hasText: 'engine workers' }).waitFor({ timeout: 60_000 });
      check((await scans()) === before, `scans after the reload: ${await scans()}, before: ${before}`);
      // Every chunk and preview record belongs to a stored scan description.
      const left = [...await storedKeys(page, 'scan-proj/'), ...await storedKeys(page, 'scan-preview/')];
      const known = (await storedKeys(page, 'scan/')).map((k) => k.slice(5));
      const orphans = left.filter((k) => !known.some((id) => k.includes(id)));
      check(orphans.length === 0, `records of no scan: ${orphans.slice(0, 3)}`);
    });

    let scanId;
    await h.step(`${mode}: a TIFF frame folder with a flat field imports a chunk of views at a time into chunked storage`, async () => {
      const before = await scans();
      await page.locator('rf-scan-library rf-file-drop input[type="file"]').setInputFiles(folderFiles(small));
      await page.waitForFunction((n) => {
        const lib = document.querySelector('rf-app')?.shadowRoot?.querySelector('rf-scan-library');
        return lib?.shadowRoot?.querySelectorAll('li').length === n || !!lib?.shadowRoot?.querySelector('#import-error');
      }, before + 1, { timeout: 120_000 });
      const failed = page.locator('rf-scan-library #import-error');
      check(!(await failed.count()), `import error: ${(await failed.count()) ? await failed.innerText() : ''}`);
      await page.locator('rf-scan-library li[aria-selected="true"]').filter({ hasText: 'frame' }).waitFor({ timeout: 30_000 });
      scanId = await page.locator('rf-scan-library li[aria-selected="true"]').getAttribute('data-scan-id');
      const chunks = await storedKeys(page, `scan-proj/${scanId}/`);
      check(chunks.length >= 1, `${chunks.length} chunk records`);
      const meta = await page.evaluate((id) => new Promise((resolve) => {
        const open = indexedDB.open('rimfill');
        open.onsuccess = () => {
          const r = open.result.transaction('records').objectStore('records').get(`scan/${id}`);
          r.onsuccess = () => { resolve(r.result); open.result.close(); };
        };
      }), scanId);
      check(meta.schema === 2 && meta.projections.chunks === chunks.length, `stored layout ${JSON.stringify(meta.projections)} with ${chunks.length} chunks`);
      check(meta.geometry.detector.channels === 96 && meta.geometry.detector.rows === 72, `detector ${JSON.stringify(meta.geometry.detector)}`);
    });

    await h.step(`${mode}: FDK streams the stored chunks; its volume is the command line's on the same files`, async () => {
      check(scanId, 'the scan was imported');
      const cliOut = join(dir, 'cli.nrrd');
      execFileSync(process.execPath, [join(root, 'bin/rimfill.js'), 'reconstruct', small.framesDir, '--geometry', small.geometry, '--flat', small.flat,
        '--method', 'fbp', '--size', '48', '--pixel', '4', '--slices', '32', '--slice-spacing', '4', '--workers', '2', '--out', cliOut]);
      const cli = parseFloatNrrd(readFileSync(cliOut));
      // The file is in the LPS frame, rows from anterior to posterior; the page stores Rimfill's
      // order (y anterior, rows from posterior to anterior): pair the rows up reversed.
      check(cli.fields.space === 'left-posterior-superior', `command line's volume space ${cli.fields.space}`);
      const [nx, ny] = cli.sizes;
      const atCli = (i) => {
        const x = i % nx, j = Math.floor(i / nx) % ny, k = Math.floor(i / (nx * ny));
        return cli.data[(k * ny + (ny - 1 - j)) * nx + x];
      };
      await page.locator('#tab-reconstruct').click();
      await page.locator('#field-method').selectOption('fbp');
      await page.locator('rf-recipe-form input[name="grid"][value="custom"]').check();
      await page.locator('rf-recipe-form input[name="gridSize"]').fill('48');
      await page.locator('rf-recipe-form input[name="gridPixel"]').fill('4');
      await page.locator('rf-recipe-form input[name="slices"][value="custom"]').check();
      await page.locator('rf-recipe-form input[name="volumeSlices"]').fill('32');
      await page.locator('rf-recipe-form input[name="volumeSpacing"]').fill('4');
      const before = await page.locator('rf-run-queue li').count();
      const resultsBefore = new Set(await storedKeys(page, 'result/'));
      await page.locator('#queue-recipe').click();
      const job = page.locator('rf-run-queue li').nth(before);
      await job.and(page.locator('[data-state="done"], [data-state="failed"]')).waitFor({ timeout: JOB_TIMEOUT });
      check((await job.getAttribute('data-state')) === 'done', `FDK job: ${await job.innerText()}`);
      // The run's result is the one record that is new (other steps may have stored results before).
      const fresh = (await storedKeys(page, 'result/')).filter((k) => !resultsBefore.has(k));
      check(fresh.length === 1, `new result records: ${fresh}`);
      const resultId = fresh[0].slice(7);
      const voxels = await storedVolume(page, resultId);
      check(voxels.length === cli.data.length, `${voxels.length} voxels in the page, ${cli.data.length} from the command line`);
      let worst = 0, scale = 0;
      for (let i = 0; i < voxels.length; i++) {
        worst = Math.max(worst, Math.abs(voxels[i] - atCli(i)));
        scale = Math.max(scale, Math.abs(cli.data[i]));
      }
      check(scale > 0 && worst <= 1e-6 * scale, `page against command line: largest difference ${worst} of ${scale}`);
    });

    await h.step(`${mode}: the volume viewer reads the planes it shows`, async () => {
      await page.locator('#tab-images').click();
      const view = page.locator('rf-volume-view');
      await view.locator('rf-image-viewer[data-plane="sagittal"]').waitFor({ timeout: 30_000 });
      const heading = await view.locator('.plane h3').nth(0).innerText();
      check(/slice \d+ of 32/.test(heading), `axial heading: ${heading}`);
      // The view holds the volume's description and three planes, never its voxels.
      const held = await page.evaluate(() => {
        const v = document.querySelector('rf-app').shadowRoot.querySelector('rf-volume-view');
        const planes = [...v.shadowRoot.querySelectorAll('rf-image-viewer[data-plane]')].map((e) => e.image?.values?.length);
        return { hasVoxels: 'data' in (v.volume ?? {}), planes };
      });
      check(!held.hasVoxels, 'the page holds no voxels of the volume');
      check(held.planes.join() === [48 * 48, 48 * 32, 48 * 32].join(), `plane sizes ${held.planes}`);
    });

    await h.step(`${mode}: a run above the memory budget is refused before it starts, naming the binning that fits`, async () => {
      await page.locator('#tab-reconstruct').click();
      await page.locator('rf-recipe-form input[name="gridSize"]').fill('256');
      await page.locator('rf-recipe-form input[name="gridPixel"]').fill('0.75');
      await page.locator('rf-recipe-form input[name="volumeSlices"]').fill('256');
      await page.locator('rf-recipe-form input[name="volumeSpacing"]').fill('0.75');
      await page.locator('#memory-budget').fill('0.3');
      const results = (await storedKeys(page, 'result/')).length;
      const before = await page.locator('rf-run-queue li').count();
      await page.locator('#queue-recipe').click();
      const job = page.locator('rf-run-queue li').nth(before);
      await job.and(page.locator('[data-state="failed"], [data-state="done"]')).waitFor({ timeout: 60_000 });
      const text = await job.innerText();
      check(/more than the budget of 300 MB .*with ([24]) x \1 detector binning/.test(text), `refusal (${await job.getAttribute('data-state')}): ${text}`);
      check((await storedKeys(page, 'result/')).length === results, 'nothing stored');
      await page.locator('#memory-budget').fill('');
    });
  } finally {
    await page.close();
    rmSync(dir, { recursive: true, force: true });
  }
}

