// The steps run against the page in one mode (served or opened from disk). Each step names
// what a user does and what must follow; screenshots go to test-artifacts/<mode>-*.png.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { check, near } from './harness.mjs';
import dicomParser from 'dicom-parser';
import { parseFloatNrrd, pngHeader } from './files.mjs';
import { JOB_TIMEOUT, queueAndFinish, queueAndWait, startLongRun } from './queue-steps.mjs';

/** FBP without truncation correction on the ground-truth grid: the CLI reference runs the same. */
const FBP_NAME = 'FBP, no correction, ramp, 576 px × 1 mm';

/** pydicom's CT test image, a committed fixture (test/fixtures/MANIFEST.json). */
const CT_SMALL = fileURLToPath(new URL('../fixtures/dicom/CT_small.dcm', import.meta.url));

/** Text of every cell of the metrics table row for `label`, by column metric and region. */
async function metricsRow(page, label) {
  const row = page.locator(`rf-metrics-table tr[data-label="${label}"]`);
  const cells = await row.locator('td[data-metric]').allTextContents();
  const regions = ['image', 'insideFov', 'outsideFov'];
  const out = {};
  regions.forEach((r, i) => { out[r] = { rmse: Number(cells[3 * i]), psnr: Number(cells[3 * i + 1]), ssim: Number(cells[3 * i + 2]) }; });
  // Cupping and data residual are shown as percentages.
  out.cupping = Number(cells[9].replace('%', ''));
  out.residual = Number(cells[10].replace('%', ''));
  return out;
}

async function download(page, click) {
  const [dl] = await Promise.all([page.waitForEvent('download'), click()]);
  return { name: dl.suggestedFilename(), bytes: readFileSync(await dl.path()) };
}

async function resultCount(page) {
  return page.locator('rf-result-list li').count();
}


export async function pageTests(h, { context, mode, url, origin, artifacts, reference }) {
  const shot = (page, name) => page.screenshot({ path: join(artifacts, `${mode}-${name}.png`), fullPage: true });
  const requests = [];
  const problems = [];
  context.on('request', (r) => requests.push(r.url()));
  const page = await context.newPage();
  page.on('pageerror', (e) => problems.push(`script error: ${e.message}`));
  page.on('console', (m) => {
    if ((m.type() === 'error' && !/deliberate crash/.test(m.text())) || /Content.Security.Policy/i.test(m.text())) problems.push(`console ${m.type()}: ${m.text()}`);
  });
  page.on('worker', (w) => w.on('console', (m) => m.type() === 'error' && !/deliberate crash/.test(m.text()) && problems.push(`worker console: ${m.text()}`)));

  const ok = await h.step(`${mode}: (a) the built page loads with its caution, policy and engine`, async () => {
    await page.goto(url);
    check((await page.title()).startsWith('Rimfill'), `title: ${await page.title()}`);
    // First visit: the demo scan is being simulated in the engine, with a progress bar.
    await page.locator('rf-app progress').waitFor({ timeout: 15_000 });
    await shot(page, '0-first-visit');
    const caution = await page.locator('#caution').innerText();
    check(/not for diagnosis/i.test(caution) && /licensed clinical practice/i.test(caution), `caution text: ${caution}`);
    const csp = await page.locator('meta[http-equiv="Content-Security-Policy"]').getAttribute('content');
    check(/default-src 'none'/.test(csp) && /connect-src 'none'/.test(csp) && !/'unsafe-inline'|'unsafe-eval'/.test(csp), `policy: ${csp}`);
    const isolated = await page.evaluate(() => crossOriginIsolated);
    check(isolated === (mode === 'http'), `crossOriginIsolated is ${isolated} in ${mode} mode`);
    const engine = page.locator('header .engine');
    await engine.filter({ hasText: 'engine workers' }).waitFor({ timeout: 30_000 });
    const text = await engine.innerText();
    check(text.includes(mode === 'http' ? 'shared memory' : 'separate memories'), `engine: ${text}`);
  });
  if (!ok) return;

  await h.step(`${mode}: (b) the demo scan is made on the first visit, with its truncation marked`, async () => {
    await page.locator('rf-scan-library li').first().waitFor({ timeout: 120_000 });
    check((await page.locator('rf-scan-library li').count()) === 1, 'exactly one scan in the library');
    const summary = page.locator('#truncation-summary');
    await summary.waitFor();
    check(/100% of views/.test(await summary.innerText()), `truncation summary: ${await summary.innerText()}`);
    // The demo thorax with arms is about 560 mm across; the water-cylinder estimate of its extent
    // must say it is far wider than the 205 mm field of view (the fits are approximate: 400-700 mm).
    const object = await page.locator('#truncation-object').innerText();
    const across = Number(/(\d+) mm across/.exec(object)?.[1]);
    check(across > 400 && across < 700, `estimated object: ${object}`);
    check(/miss up to/.test(await page.locator('#truncation-mass').innerText()), 'missing mass reported');
    await page.locator('rf-sinogram-image canvas').waitFor();
    await shot(page, '1-projections');
  });

  await h.step(`${mode}: a wrong geometry value is refused with the reason and nothing changes`, async () => {
    const sdd = page.locator('rf-geometry-form input[name="sourceDetector"]');
    await sdd.fill('500');
    await page.locator('rf-geometry-form button.primary').click();
    await page.locator('#geometry-error').waitFor();
    const text = await page.locator('rf-geometry-form #error-sourceDetector').innerText();
    check(/Source to detector: got 500, expected a distance greater than the source to isocentre distance \(600 mm\)/.test(text), `message: ${text}`);
    await page.locator('rf-geometry-form button', { hasText: 'Undo edits' }).click();
    check((await sdd.inputValue()) === '1000', `after undo: ${await sdd.inputValue()}`);
    check(/source 600 mm \/ detector 1000 mm/.test(await page.locator('rf-scan-library li').first().innerText()), 'stored geometry unchanged');
  });

  await h.step(`${mode}: a library edit the coordinator refuses is reported in the page, and nothing changes`, async () => {
    const item = page.locator('rf-scan-library li[aria-selected="true"]');
    const before = await item.locator('.name').innerText();
    await item.locator('button', { hasText: 'Rename' }).click();
    const input = page.locator('rf-scan-library input.rename');
    await input.fill('x'.repeat(250));
    await input.press('Enter');
    const alert = page.locator('#page-alert');
    await alert.waitFor({ timeout: 30_000 });
    const text = await alert.innerText();
    check(/name: got "x{250}", expected 1 to 200 characters/.test(text), `alert: ${text.slice(0, 120)}`);
    check((await item.locator('.name').innerText()) === before, 'the stored name is unchanged');
    await alert.locator('button', { hasText: 'Dismiss' }).click();
  });

  await h.step(`${mode}: (f) a malformed file is refused with the reason and nothing is stored`, async () => {
    const broken = Buffer.from('NRRD0004\ntype: float\ndimension: 3\nsizes: 10 1 5\nendian: little\nencoding: raw\nrimfill.geometry:={"kind":"parallel","detector":{"channels":10,"pitch":1},"anglesDeg":{"start":0,"step":36,"count":5}}\n\nonly a few bytes');
    await page.locator('rf-scan-library rf-file-drop input[type="file"]').setInputFiles({ name: 'broken.nrrd', mimeType: 'application/octet-stream', buffer: broken });
    const err = page.locator('#import-error');
    await err.waitFor({ timeout: 30_000 });
    const text = await err.innerText();
    check(/broken\.nrrd: NRRD: the header promises 200 bytes of data from byte 0, the file holds 16/.test(text), `message: ${text}`);
    check((await page.locator('rf-scan-library li').count()) === 1, 'still one scan');
    await shot(page, '2-import-error');
  });

  const methods = [];
  await h.step(`${mode}: (b) runs FBP and every other method the recipe offers, as a queue with progress`, async () => {
    await page.locator('#tab-reconstruct').click();
    const methodSelect = page.locator('#field-method');
    const offered = await methodSelect.locator('option').evaluateAll((os) => os.map((o) => o.value));
    check(offered.includes('fbp'), `methods offered: ${offered}`);
    let queued = 0;
    await methodSelect.selectOption('fbp');
    // The form starts with the suggested correction; the CLI reference runs without one.
    const extend = page.locator('#field-extend');
    const extensions = (await extend.count()) ? await extend.locator('option').evaluateAll((os) => os.map((o) => o.value)) : [];
    if (extensions.includes('none')) await extend.selectOption('none');
    await queueAndWait(page, ++queued);
    methods.push({ method: 'fbp', name: FBP_NAME });
    if (extensions.includes('water')) {
      await extend.selectOption('water');
      await queueAndWait(page, ++queued);
      methods.push({ method: 'fbp', extend: 'water' });
    }
    for (const m of offered.filter((x) => x !== 'fbp')) {
      await methodSelect.selectOption(m);
      if (extensions.includes('water') && (await extend.count())) await extend.selectOption('water');
      await queueAndWait(page, ++queued);
      methods.push({ method: m });
    }
    const running = page.locator('rf-run-queue li[data-state="running"]');
    await running.first().waitFor({ timeout: 30_000 }).catch(() => undefined);
    await shot(page, '3-reconstruct-queue');
    await page.locator('rf-run-queue li[data-state="waiting"], rf-run-queue li[data-state="running"]').first()
      .waitFor({ state: 'detached', timeout: JOB_TIMEOUT * queued });
    const states = await page.locator('rf-run-queue li').evaluateAll((ls) => ls.map((l) => l.dataset.state));
    const errors = await page.locator('rf-run-queue .error').allInnerTexts();
    check(states.every((s) => s === 'done'), `job states ${states}; errors: ${errors.join(' | ')}`);
    check(states.length === methods.length, `${states.length} jobs for ${methods.length} recipes`);
  });

  await h.step(`${mode}: the page stays responsive during a run; cancelling it stops it and stores nothing`, async () => {
    await page.locator('#field-method').selectOption('fbp');
    if (await page.locator('#field-extend').count()) await page.locator('#field-extend').selectOption({ index: 0 });
    await page.locator('rf-recipe-form input[value="custom"]').check();
    await page.locator('rf-recipe-form input[name="gridSize"]').fill('3072');
    await page.locator('rf-recipe-form input[name="gridPixel"]').fill('0.1875');
    const before = (await page.locator('rf-run-queue li').count());
    await queueAndWait(page, before + 1);
    const job = page.locator('rf-run-queue li').nth(before);
    await job.and(page.locator('[data-state="running"]')).waitFor({ timeout: 30_000 });
    // Timer ticks every 20 ms for 1 s while the engine works: the longest gap shows whether
    // the main thread was blocked (kernels run in workers; 250 ms is a visible stall).
    const gap = await page.evaluate(() => new Promise((done) => {
      let last = performance.now(), worst = 0;
      const t = setInterval(() => { const now = performance.now(); worst = Math.max(worst, now - last); last = now; }, 20);
      setTimeout(() => { clearInterval(t); done(worst); }, 1000);
    }));
    console.log(`       longest main-thread gap during a run: ${gap.toFixed(0)} ms`);
    check(gap < 250, `the main thread stalled for ${gap.toFixed(0)} ms during a run`);
    check((await job.getAttribute('data-state')) === 'running', 'the job still runs after the probe (a larger grid is needed for this test)');
    await page.locator('rf-run-queue li').nth(before).locator('button', { hasText: 'Cancel' }).click();
    await page.locator(`rf-run-queue li[data-state="cancelled"]`).waitFor({ timeout: 10_000 });
    await page.locator('#tab-images').click();
    check((await resultCount(page)) === methods.length, `${await resultCount(page)} results stored, expected ${methods.length}`);
  });

  await h.step(`${mode}: a worker that crashes fails its run (not hung), and the engine restarts`, async () => {
    const before = await page.locator('rf-run-queue li').count();
    await page.locator('#tab-reconstruct').click();
    await page.locator('rf-recipe-form input[value="custom"]').check();
    await page.locator('rf-recipe-form input[name="gridSize"]').fill('3072');
    await page.locator('rf-recipe-form input[name="gridPixel"]').fill('0.1875');
    await queueAndWait(page, before + 1);
    await page.locator('rf-run-queue li').nth(before).and(page.locator('[data-state="running"]')).waitFor({ timeout: 30_000 });
    const workers = page.workers();
    check(workers.length >= 2, `${workers.length} workers (coordinator and kernels expected)`);
    // An uncaught error thrown inside a worker is what a crash looks like to the page.
    await workers[workers.length - 1].evaluate(() => setTimeout(() => { throw new Error('deliberate crash (browser test)'); }, 0));
    const failed = page.locator('rf-run-queue li').nth(before).and(page.locator('[data-state="failed"]'));
    await failed.waitFor({ timeout: 15_000 });
    const text = await failed.innerText();
    check(/stopped unexpectedly.*deliberate crash.*nothing was stored/s.test(text), `failure message: ${text}`);
    await page.locator('rf-recipe-form input[value="reference"]').check();
    await queueAndWait(page, before + 2);
    await page.locator('rf-run-queue li').nth(before + 1).and(page.locator('[data-state="done"]')).waitFor({ timeout: JOB_TIMEOUT });
    await page.locator('rf-run-queue li').nth(before + 1).locator('button', { hasText: 'Remove' }).click();
    await page.locator('#tab-images').click();
    const boxes = page.locator('rf-result-list input[type="checkbox"]');
    await boxes.last().uncheck();
    await page.locator(`rf-result-list li:last-child button`, { hasText: 'Delete' }).click();
    await page.locator(`rf-result-list li:last-child button.danger`, { hasText: /^Delete$/ }).click();
    await page.waitForFunction((n) => document.querySelector('rf-app')?.shadowRoot?.querySelector('rf-results-view')?.shadowRoot
      ?.querySelector('rf-result-list')?.shadowRoot?.querySelectorAll('li').length === n, methods.length);
  });

  await h.step(`${mode}: (c) the metrics table agrees with the command line on the same job`, async () => {
    await page.locator('#tab-images').click();
    // Tick four results (the page compares at most four), the FBP one among them, so each has a row.
    const boxes = page.locator('rf-result-list input[type="checkbox"]');
    const total = await boxes.count();
    for (let i = 0; i < total; i++) if (await boxes.nth(i).isChecked()) await boxes.nth(i).uncheck();
    await page.locator('rf-result-list li').filter({ has: page.getByText(FBP_NAME, { exact: true }) }).locator('input[type="checkbox"]').check();
    const n = Math.min(4, total);
    for (let i = 0; (await page.locator('rf-result-list input[type="checkbox"]:checked').count()) < n; i++) {
      if (!(await boxes.nth(i).isChecked())) await boxes.nth(i).check();
    }
    await page.locator(`rf-metrics-table tr[data-label="${FBP_NAME}"]`).waitFor();
    const got = await metricsRow(page, FBP_NAME);
    const want = reference.comparison.regions;
    for (const region of ['image', 'insideFov', 'outsideFov']) {
      // The table shows RMSE and PSNR to 0.1 and SSIM to 0.001: half a unit of the last digit.
      near(got[region].rmse, want[region].rmse, 0.051, `${region} RMSE (HU)`);
      near(got[region].psnr, want[region].psnr, 0.051, `${region} PSNR (dB)`);
      near(got[region].ssim, want[region].ssim, 0.00051, `${region} SSIM`);
    }
    // Cupping excess (shown in % to 0.1) as the command line computes it.
    near(got.cupping, 100 * reference.comparison.cupping.excess, 0.051, 'cupping excess (%)');
    // The re-projection residual (needs no reference), as the command line computes it.
    near(got.residual, 100 * reference.comparison.residual.relative, 0.051, 'data residual (%)');
    const rows = await page.locator('rf-metrics-table tbody tr').count();
    check(rows === n, `${rows} metric rows for ${n} ticked results`);
    for (const cell of await page.locator('rf-metrics-table td[data-metric]').allTextContents()) check(Number.isFinite(Number(cell.replace('%', ''))), `metric cell "${cell}"`);
    await shot(page, '4-images-compare');
  });

  await h.step(`${mode}: window presets, HU under the cursor, line profile, region and difference`, async () => {
    await page.locator('rf-viewer-toolbar button[data-preset="Lung"]').click();
    check((await page.locator('rf-viewer-toolbar input[name="width"]').inputValue()) === '1500', 'lung width');
    check((await page.locator('rf-viewer-toolbar input[name="level"]').inputValue()) === '-600', 'lung level');
    const panel = page.locator('rf-image-viewer canvas').first();
    const box = await panel.boundingBox();
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    const readout = await page.locator('rf-image-viewer .readout').first().innerText();
    check(/x -?\d+\.\d mm, y -?\d+\.\d mm: -?\d+ HU/.test(readout), `cursor read-out: ${readout}`);
    await page.locator('rf-viewer-toolbar button[data-preset="Soft tissue"]').click();
    await page.locator('rf-viewer-toolbar button[data-tool="line"]').click();
    await page.mouse.move(box.x + box.width * 0.15, box.y + box.height * 0.5);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.85, box.y + box.height * 0.5, { steps: 5 });
    await page.mouse.up();
    const panels = await page.locator('rf-image-viewer').count();
    await page.locator('rf-line-plot#profile path').first().waitFor();
    check((await page.locator('rf-line-plot#profile path').count()) === panels, 'one profile per panel');
    await page.locator('rf-viewer-toolbar button[data-tool="region"]').click();
    await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.45);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.55, box.y + box.height * 0.45, { steps: 3 });
    await page.mouse.up();
    const regionRows = await page.locator('rf-region-table tbody tr').count();
    check(regionRows === panels, `${regionRows} region rows for ${panels} panels`);
    await shot(page, '5-profile-region');
    await page.locator('rf-viewer-toolbar input[name="difference"]').check();
    await page.locator('rf-image-viewer .label', { hasText: '−' }).first().waitFor();
    await shot(page, '6-difference');
    await page.locator('rf-viewer-toolbar input[name="difference"]').uncheck();
  });

  await h.step(`${mode}: (e) exports NRRD (same pixels as the command line), PNG and the report`, async () => {
    await page.locator(`rf-image-viewer[data-key] .label`, { hasText: FBP_NAME }).first().waitFor();
    const fbpPanel = page.locator('rf-image-viewer', { has: page.locator('.label', { hasText: FBP_NAME }) }).first();
    const b = await fbpPanel.locator('canvas').boundingBox();
    await page.locator('rf-viewer-toolbar button[data-tool="window"]').click();
    await page.mouse.click(b.x + 5, b.y + 5);
    const nrrd = await download(page, () => page.locator('#export-nrrd-hu').click());
    const img = parseFloatNrrd(nrrd.bytes);
    check(img.sizes.join(' ') === '576 576', `sizes ${img.sizes}`);
    check(img.keys['rimfill.quantity'] === 'hu', `quantity ${img.keys['rimfill.quantity']}`);
    check(img.fields.space === 'left-posterior-superior' && /^\(1,0,0\) \(0,1,0\)$/.test(img.fields['space directions']), `space ${img.fields.space}, directions ${img.fields['space directions']}`);
    const mw = Number(reference.fbp.keys['rimfill.muWater']);
    let maxDiff = 0;
    for (let i = 0; i < img.data.length; i++) maxDiff = Math.max(maxDiff, Math.abs(img.data[i] - (reference.fbp.data[i] - mw) * (1000 / mw)));
    // Same engine and split: the pixels agree to float32 rounding of values up to a few thousand HU.
    check(maxDiff < 0.05, `largest difference from the command line's image: ${maxDiff} HU`);
    // DICOM CT, encoded in the worker: read by dicom-parser (not the page's writer), HU = stored x
    // slope + intercept (DICOM PS3.3 C.11.1.1.2) against the command line's image; both store
    // rows from anterior to posterior (the LPS frame), so pixels pair up index by index.
    const dcm = await download(page, () => page.locator('#export-dicom').click());
    check(/\.dcm$/.test(dcm.name), `DICOM file name ${dcm.name}`);
    const d = dicomParser.parseDicom(new Uint8Array(dcm.bytes));
    check(d.string('x00080060') === 'CT' && d.string('x00080008') === 'DERIVED\\SECONDARY\\AXIAL', `modality ${d.string('x00080060')}, type ${d.string('x00080008')}`);
    check(d.string('x0008103e') === FBP_NAME.replace('×', 'x'), `series description ${d.string('x0008103e')}`);
    check(d.uint16('x00280010') === 576 && d.uint16('x00280011') === 576, `DICOM ${d.uint16('x00280011')} x ${d.uint16('x00280010')}`);
    const slope = Number(d.string('x00281053')), intercept = Number(d.string('x00281052'));
    const px = d.elements.x7fe00010;
    const stored = new Int16Array(dcm.bytes.buffer.slice(dcm.bytes.byteOffset + px.dataOffset, dcm.bytes.byteOffset + px.dataOffset + 576 * 576 * 2));
    let dicomDiff = 0;
    for (let i = 0; i < stored.length; i++) dicomDiff = Math.max(dicomDiff, Math.abs(stored[i] * slope + intercept - (reference.fbp.data[i] - mw) * (1000 / mw)));
    check(dicomDiff <= 0.5 * slope + 0.01, `largest DICOM difference from the command line's image: ${dicomDiff} HU (rescale step ${slope})`);
    const png = pngHeader((await download(page, () => page.locator('#export-png').click())).bytes);
    check(png.width === 576 && png.height === 576, `PNG ${png.width} x ${png.height}`);
    const report = (await download(page, () => page.locator('#export-report').click())).bytes.toString('utf8');
    check(/not for diagnosis/.test(report), 'report caution');
    check(/default-src 'none'/.test(report), 'report policy');
    const images = report.match(/<img [^>]*src="data:image\/png;base64,/g) ?? [];
    check(images.length === (await page.locator('rf-image-viewer').count()), `${images.length} images in the report`);
    check(report.includes(FBP_NAME) && report.includes('Inside the measured field'), 'report recipe and metrics');
    check(/<svg[^>]*viewBox/.test(report), 'report profile plot');
  });

  await h.step(`${mode}: (d) reloading, even mid-run, keeps the scan and every finished result`, async () => {
    const results = await resultCount(page);
    await page.locator('#tab-reconstruct').click();
    await startLongRun(page);
    await page.reload();
    await page.locator('rf-scan-library li').first().waitFor({ timeout: 60_000 });
    check((await page.locator('rf-scan-library li').count()) === 1, 'one scan after reload (the demo is not made twice)');
    await page.locator('#tab-images').click();
    await page.locator('rf-result-list li').first().waitFor();
    check((await resultCount(page)) === results, `${await resultCount(page)} results after reload, expected ${results}`);
    await shot(page, '7-after-reload');
  });

  await h.step(`${mode}: a stored result serves as the prior of the prior-guided method`, async () => {
    await page.locator('#tab-reconstruct').click();
    await page.locator('#field-method').selectOption('prior');
    const priorSelect = page.locator('#field-prior');
    const stored = await priorSelect.locator('option').evaluateAll((os) => os.map((o) => ({ value: o.value, label: o.textContent })));
    const water = stored.find((o) => o.value.startsWith('result:') && /water/.test(o.label));
    check(water, `prior choices: ${stored.map((o) => o.label).join(' | ')}`);
    await priorSelect.selectOption(water.value);
    await page.locator('#field-iterations').fill('2');
    await page.locator('rf-recipe-form input[value="reference"]').check();
    check(/prior: “FBP/.test(await page.locator('rf-recipe-form .summary').innerText()), 'the summary names the stored result');
    const results = await resultCount(page);
    await queueAndFinish(page, 'prior job');
    await page.locator('#tab-images').click();
    check((await resultCount(page)) === results + 1, 'the result is stored');
  });

  await h.step(`${mode}: an image file added to the scan becomes a result, compared with the ground truth; a damaged one is refused`, async () => {
    await page.locator('#tab-images').click();
    await page.locator('rf-result-list #reference').selectOption('truth');
    const results = await resultCount(page);
    const picker = page.locator('rf-result-list rf-file-drop input[type="file"]');
    const junk = join(reference.dir, 'junk.nrrd');
    writeFileSync(junk, 'NRRD0004\ntype: float\ndimension: 2\nsizes: 64 64\nencoding: raw\nendian: little\n\nshort');
    await picker.setInputFiles(junk);
    const err = page.locator('#image-import-error');
    await err.waitFor({ timeout: 30_000 });
    check(/junk\.nrrd/.test(await err.innerText()), `message: ${await err.innerText()}`);
    check((await resultCount(page)) === results, 'nothing stored for the damaged file');
    // The command line's ground truth of the demo scan, as a file: it must match the page's truth.
    await picker.setInputFiles(join(reference.dir, 'truth.nrrd'));
    const name = 'Image file: truth.nrrd';
    await page.locator(`rf-metrics-table tr[data-label="${name}"]`).waitFor({ timeout: 60_000 });
    check((await page.locator('#image-import-error').count()) === 0, 'the error is gone after a good file');
    check((await resultCount(page)) === results + 1, 'the image is stored as a result');
    const got = await metricsRow(page, name);
    for (const region of ['image', 'insideFov', 'outsideFov']) check(got[region].rmse < 0.1, `${region} RMSE ${got[region].rmse} HU against the ground truth`);
    check(Number.isFinite(got.residual) && got.residual > 0, `data residual ${got.residual}%`);
    // A DICOM CT image (pydicom's test file CT_small.dcm, a committed fixture) is read in the
    // page too: HU by its rescale, converted with the scan's mu_water.
    await picker.setInputFiles(CT_SMALL);
    await page.locator('rf-result-list li', { hasText: 'Image file: CT_small.dcm' }).waitFor({ timeout: 60_000 });
    check((await resultCount(page)) === results + 2, 'the DICOM image is stored as a result');
    await shot(page, '7b-image-added');
  });

  await h.step(`${mode}: HU calibration from a region marked with its known HU gives back the scan's mu_water; a wrong value is refused`, async () => {
    // The ground truth as a result (the step above): a region in it, marked with the HU the page
    // shows there, must give back the mu_water the scan was simulated with (HU = 1000 (mu - mu_w) / mu_w).
    const name = 'Image file: truth.nrrd';
    const viewer = page.locator('rf-results-view rf-image-viewer', { hasText: name });
    await page.locator('rf-results-view rf-viewer-toolbar button[data-tool="region"]').click();
    const box = await viewer.locator('canvas').boundingBox();
    await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.5);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.53, box.y + box.height * 0.5, { steps: 3 });
    await page.mouse.up();
    const row = page.locator('rf-region-table tbody tr', { hasText: name });
    await row.waitFor();
    const meanHu = Number((await row.locator('td').nth(1).innerText()).trim());
    check(Number.isFinite(meanHu), `region mean ${meanHu}`);
    await page.locator('#material-hu').fill(String(meanHu));
    await page.locator('#measure-mu-water').click();
    await page.locator('rf-hu-calibration .sub', { hasText: `measured in “${name}”` }).waitFor({ timeout: 30_000 });
    const want = Number(reference.fbp.keys['rimfill.muWater']);
    const got = Number(await page.locator('#mu-water').innerText());
    // The mean is shown to 0.1 HU: mu_water within 1e-4 of the simulated one, relative.
    near(got, want, 1e-4 * want, 'mu_water measured from the marked region (1/mm)');
    await page.locator('#mu-water-input').fill('5');
    await page.locator('#set-mu-water').click();
    const err = page.locator('#calibration-error');
    await err.waitFor({ timeout: 30_000 });
    check(/expected the attenuation of water in 1\/mm/.test(await err.innerText()), `message: ${await err.innerText()}`);
    check(Number(await page.locator('#mu-water').innerText()) === got, 'a refused value changes nothing');
    await shot(page, '7c-calibration');
  });

  await h.step(`${mode}: the cone-beam demo on request; FDK with water extension in the workers agrees with the command line`, async () => {
    check(reference?.cone, 'the command-line cone-beam reference ran');
    check(!(await page.locator('rf-scan-library li').filter({ hasText: 'cone-beam' }).count()), 'no cone-beam demo before it is asked for');
    await page.locator('#cone-demo').click();
    const item = page.locator('rf-scan-library li').filter({ hasText: 'cone-beam scan' });
    await item.waitFor({ timeout: 180_000 });
    check(/Cone beam, flat detector 192 × 144 × 2 mm, 200 views over 200°/.test(await item.innerText()), `scan summary: ${await item.innerText()}`);
    await item.click();
    await page.locator('#tab-reconstruct').click();
    await page.locator('#field-method').selectOption('fbp');
    await page.locator('#field-extend').selectOption('water');
    await page.locator('rf-recipe-form input[value="reference"]').check();
    await queueAndFinish(page, 'cone job');
    await page.locator('#tab-images').click();
    const choice = page.locator('rf-volume-view #volume-choice');
    await choice.waitFor();
    await page.waitForFunction(() => {
      const v = document.querySelector('rf-app')?.shadowRoot?.querySelector('rf-volume-view');
      return /water cylinder/.test(v?.shadowRoot?.querySelector('#volume-choice')?.selectedOptions?.[0]?.textContent ?? '') && !!v?.volume;
    }, undefined, { timeout: 30_000 });
    // The volume against the reference volume, inside and outside the FOV cylinder, as the
    // command line computes it (same engine; the table shows RMSE to 0.1 HU).
    const want = reference.cone.comparison;
    for (const region of ['volume', 'insideFov', 'outsideFov']) {
      const got = Number(await page.locator(`rf-volume-metrics tr[data-region="${region}"] td[data-metric="rmse"]`).innerText());
      near(got, want.regions[region].rmse, 0.051, `${region} RMSE (HU)`);
    }
    await shot(page, '8-cone-volume');
  });

  await h.step(`${mode}: the volume viewer shows three planes with a linked cursor, window presets, profile, region and the FOV cylinder`, async () => {
    const view = page.locator('rf-volume-view');
    const planes = view.locator('rf-image-viewer[data-plane]');
    check((await planes.count()) === 3, `${await planes.count()} planes`);
    const heading = (plane) => view.locator('.plane h3').nth(['axial', 'coronal', 'sagittal'].indexOf(plane)).innerText();
    const coord = async (plane) => Number(/= (-?\d+\.\d) mm/.exec(await heading(plane))[1]);
    check(/FOV cylinder \(dashed\): radius 118\.5 mm, half height 90\.0 mm/.test(await view.locator('#volume-point').innerText()), `point line: ${await view.locator('#volume-point').innerText()}`);
    // The slice tool: a click in the axial plane, 60 mm right of and 40 mm above its centre,
    // moves the sagittal plane to that x and the coronal plane to that y; z stays.
    const z0 = await coord('axial');
    const axial = planes.nth(0).locator('canvas');
    const b = await axial.boundingBox();
    const mmPerPx = (196 * 3) / b.width; // the whole 588 mm grid fits the square panel at zoom 1
    await axial.click({ position: { x: b.width / 2 + 60 / mmPerPx, y: b.height / 2 - 40 / mmPerPx } });
    near(await coord('sagittal'), 60, 3, 'sagittal plane x after the click (mm)');
    near(await coord('coronal'), 40, 3, 'coronal plane y after the click (mm)');
    check((await coord('axial')) === z0, 'the axial plane keeps its z');
    // A click in the coronal plane moves the axial plane to that height.
    const coronal = planes.nth(1).locator('canvas');
    const c = await coronal.boundingBox();
    await coronal.click({ position: { x: c.width / 2, y: c.height / 2 - 30 / mmPerPx } });
    near(await coord('axial'), 30, 3, 'axial plane z after the click in the coronal plane (mm)');
    // The sliders move one plane only.
    const slide = (plane, index) => view.locator(`input[name="slice-${plane}"]`).evaluate((el, i) => {
      el.value = String(i);
      el.dispatchEvent(new Event('input', { bubbles: true }));
    }, index);
    await slide('sagittal', 98);
    near(await coord('sagittal'), 1.5, 0.01, 'sagittal plane at slice 99 (mm)');
    near(await coord('coronal'), 40, 3, 'coronal plane unchanged by the sagittal slider');
    await slide('coronal', 98);
    await slide('axial', 33);
    await shot(page, '9-volume-cursor');
    // Window presets, a line profile across the coronal plane, a region in the sagittal plane.
    await view.locator('rf-viewer-toolbar button[data-preset="Lung"]').click();
    check((await view.locator('rf-viewer-toolbar input[name="width"]').inputValue()) === '1500', 'lung window on the volume');
    await view.locator('rf-viewer-toolbar button[data-preset="Soft tissue"]').click();
    await view.locator('rf-viewer-toolbar button[data-tool="line"]').click();
    await page.mouse.move(c.x + c.width * 0.2, c.y + c.height * 0.5);
    await page.mouse.down();
    await page.mouse.move(c.x + c.width * 0.8, c.y + c.height * 0.5, { steps: 5 });
    await page.mouse.up();
    await view.locator('rf-line-plot#volume-profile path').first().waitFor();
    const s = await planes.nth(2).locator('canvas').boundingBox();
    await view.locator('rf-viewer-toolbar button[data-tool="region"]').click();
    await page.mouse.move(s.x + s.width * 0.5, s.y + s.height * 0.5);
    await page.mouse.down();
    await page.mouse.move(s.x + s.width * 0.53, s.y + s.height * 0.5, { steps: 3 });
    await page.mouse.up();
    const row = view.locator('rf-region-table tbody tr');
    await row.first().waitFor();
    const cells = await row.first().locator('td').allInnerTexts();
    check(/Sagittal/.test(cells[0]) && Number.isFinite(Number(cells[1])) && Number(cells[3]) > 0, `region row: ${cells.join(' | ')}`);
    const readout = await planes.nth(2).locator('.readout').innerText();
    check(/y -?\d+\.\d mm, z -?\d+\.\d mm: -?\d+ HU/.test(readout), `sagittal read-out: ${readout}`);
    await shot(page, '10-volume-tools');
    // The shown volume saved as NRRD: its grid, mu values and FOV cylinder in the header.
    const saved = parseFloatNrrd((await download(page, () => view.locator('#export-volume').click())).bytes);
    check(saved.sizes.join(' ') === '196 196 66', `saved volume sizes ${saved.sizes}`);
    check(saved.keys['rimfill.quantity'] === 'mu' && Number(saved.keys['rimfill.fovHalfHeight']) > 89, `saved volume keys ${JSON.stringify(saved.keys)}`);
    check(saved.fields.space === 'left-posterior-superior' && /^\(3,0,0\) \(0,3,0\) \(0,0,3\)$/.test(saved.fields['space directions']), `space ${saved.fields.space}, directions ${saved.fields['space directions']}`);
  });

  await h.step(`${mode}: a cone-beam recipe with chosen slices gives a volume of those slices`, async () => {
    await page.locator('#tab-reconstruct').click();
    await page.locator('#field-method').selectOption('fbp');
    await page.locator('#field-extend').selectOption('none');
    await page.locator('rf-recipe-form input[name="slices"][value="custom"]').check();
    await page.locator('rf-recipe-form input[name="volumeSlices"]').fill('20');
    await page.locator('rf-recipe-form input[name="volumeSpacing"]').fill('6');
    check(/20 slices × 6 mm/.test(await page.locator('rf-recipe-form .summary').innerText()), 'the summary names the slices');
    await queueAndFinish(page, 'cone job');
    await page.locator('#tab-images').click();
    const view = page.locator('rf-volume-view');
    const choice = view.locator('#volume-choice');
    const option = choice.locator('option').filter({ hasText: '20 slices × 6 mm' });
    await option.waitFor({ state: 'attached', timeout: 30_000 });
    await choice.selectOption(await option.getAttribute('value'));
    await page.waitForFunction(() => {
      const v = document.querySelector('rf-app')?.shadowRoot?.querySelector('rf-volume-view');
      return /20 slices/.test(v?.shadowRoot?.querySelector('#volume-choice')?.selectedOptions?.[0]?.textContent ?? '') && v?.volume?.grid?.nz === 20;
    }, undefined, { timeout: 30_000 });
    const saved = parseFloatNrrd((await download(page, () => view.locator('#export-volume').click())).bytes);
    check(saved.sizes[2] === 20, `saved volume sizes ${saved.sizes}`);
    check(/\(0,0,6\)$/.test(saved.fields['space directions']), `space directions ${saved.fields['space directions']}`);
  });

  await h.step(`${mode}: (g) no request left the page's own origin, and no script error`, async () => {
    const own = (u) => u.startsWith('data:') || u.startsWith('blob:') || (mode === 'http' ? u.startsWith(`${origin}/`) : u === url);
    const outside = requests.filter((u) => !own(u));
    check(requests.length > 0, 'requests were recorded');
    check(outside.length === 0, `requests outside the page: ${outside.slice(0, 5).join(', ')}`);
    check(problems.length === 0, problems.slice(0, 5).join(' | '));
  });
}
