// A physicist's first hour on a laptop screen (1280 x 800, then 1366 x 768), on a fresh profile:
// the recipe starts with the correction the scan's report suggests; none and water queued on the
// demo are compared under labels that say their correction in words; a full comparison asks
// which image leaves and keeps the baseline at hand; the Images tab fits the screen; the geometry
// form keeps valid edits and marks the wrong field; messages speak the page's words; a run
// interrupted by a reload is shown as such, with one click to run it again.
// Screenshots go to test-artifacts/first-hour-*.png.
import { join } from 'node:path';
import { check } from './harness.mjs';
import { overflowing } from './layout.mjs';
import { queueAndFinish, startLongRun } from './queue-steps.mjs';

/** Labels of the rows of the metrics table, in order. */
const metricLabels = (page) => page.locator('rf-metrics-table tbody tr').evaluateAll((rows) => rows.map((r) => r.dataset.label));

export async function firstHourTests(h, { context, mode, url, artifacts }) {
  const shot = (page, name, fullPage = false) => page.screenshot({ path: join(artifacts, `first-hour-${mode}-${name}.png`), fullPage });
  const page = await context.newPage();
  const problems = [];
  page.on('pageerror', (e) => problems.push(`script error: ${e.message}`));

  const ok = await h.step(`${mode} 1280 x 800: the recipe starts with the correction the scan's report suggests, and says why`, async () => {
    await page.goto(url);
    await page.locator('rf-scan-library li').first().waitFor({ timeout: 180_000 });
    const advice = page.locator('#truncation-advice');
    await advice.waitFor({ timeout: 60_000 });
    check(/^water cylinder: 100% of views are cut off \(both edges\), the object reaching up to \d+ mm beyond/.test(await advice.innerText()), `projections tab: ${await advice.innerText()}`);
    await page.locator('#tab-reconstruct').click();
    check((await page.locator('#field-extend').inputValue()) === 'water', `the form starts with ${await page.locator('#field-extend').inputValue()}`);
    check(/^Suggested for this scan: water cylinder\. 100% of views are cut off/.test(await page.locator('#extend-advice').innerText()), 'the reason beside the field');
    check(/\d+ px × [\d.]+ mm, as the command line picks it/.test(await page.locator('rf-recipe-form .grid-choices').innerText()), 'the default grid is named');
    await shot(page, '1280-recipe');
  });
  if (!ok) return;

  await h.step(`${mode} 1280 x 800: none and water queued on the demo are compared under labels that say their correction in words`, async () => {
    await page.locator('#field-extend').selectOption('none');
    await queueAndFinish(page, 'FBP without correction');
    await page.locator('#field-extend').selectOption('water');
    await queueAndFinish(page, 'FBP with water cylinder');
    await page.locator('#tab-images').click();
    await page.locator('rf-metrics-table tbody tr').nth(1).waitFor({ timeout: 30_000 });
    const labels = await metricLabels(page);
    check(labels.length === 2 && /^FBP, no correction, /.test(labels[0]) && /^FBP, water cylinder, /.test(labels[1]), `metrics rows: ${labels.join(' | ')}`);
    const panels = await page.locator('rf-image-viewer .label').allInnerTexts();
    check(panels.some((t) => /no correction/.test(t)) && panels.some((t) => /water cylinder/.test(t)), `panel labels: ${panels.join(' | ')}`);
    check(/baseline/.test(await page.locator('rf-result-list li', { hasText: 'no correction' }).innerText()), 'the uncorrected result is marked as the baseline');
    check((await overflowing(page)).length === 0, `at 1280 x 800: ${(await overflowing(page)).join('; ')}`);
    await shot(page, '1280-images');
    await shot(page, '1280-images-full', true);
  });

  await h.step(`${mode}: with four compared, a finished run waits for the user to choose which image leaves; the baseline stays and comes back in one click`, async () => {
    await page.locator('#tab-reconstruct').click();
    for (const extend of ['edge', 'mirror', 'cosine']) {
      await page.locator('#field-extend').selectOption(extend);
      await queueAndFinish(page, `FBP with ${extend}`);
    }
    await page.locator('#tab-images').click();
    const chooser = page.locator('rf-compare-chooser');
    await chooser.waitFor({ timeout: 30_000 });
    const asked = await chooser.locator('.card').innerText();
    check(/“FBP, cosine taper, .*” is ready, and 4 images are compared already/.test(asked), `chooser: ${asked}`);
    let labels = await metricLabels(page);
    check(labels.length === 4 && labels.some((l) => /no correction/.test(l)) && !labels.some((l) => /cosine/.test(l)), `before choosing: ${labels.join(' | ')}`);
    check(/\(baseline\)/.test(await chooser.locator('button', { hasText: 'no correction' }).innerText()), 'the chooser marks the baseline');
    await shot(page, '1280-chooser');
    await chooser.locator('button', { hasText: 'mirror' }).click();
    await page.locator('rf-metrics-table tr[data-label^="FBP, cosine taper"]').waitFor();
    labels = await metricLabels(page);
    check(labels.length === 4 && labels.some((l) => /no correction/.test(l)) && !labels.some((l) => /mirror/.test(l)), `after choosing: ${labels.join(' | ')}`);
    check((await chooser.count()) === 0, 'the chooser is gone');
    // Unticked, the baseline comes back with one click.
    await page.locator('rf-result-list li', { hasText: 'no correction' }).locator('input[type="checkbox"]').uncheck();
    await page.locator('#bring-back-baseline').click();
    await page.locator('rf-metrics-table tr[data-label^="FBP, no correction"]').waitFor();
    check((await metricLabels(page)).length === 4, 'four compared again');
  });

  await h.step(`${mode} 1366 x 768: the Images tab fits the screen (toolbar, every panel, metrics table)`, async () => {
    await page.setViewportSize({ width: 1366, height: 768 });
    await page.waitForTimeout(500);
    const out = await overflowing(page);
    check(out.length === 0, out.slice(0, 8).join('; '));
    check((await page.locator('rf-image-viewer').count()) === 5, 'four results and the ground truth shown');
    await shot(page, '1366-images');
    await shot(page, '1366-images-full', true);
    await page.setViewportSize({ width: 1280, height: 800 });
  });

  await h.step(`${mode}: the geometry form keeps valid edits, marks the wrong field with its message, and applies nothing until all are valid`, async () => {
    await page.locator('#tab-scan').click();
    const form = page.locator('rf-geometry-form');
    await form.locator('input[name="pitchU"]').fill('1.05');
    await form.locator('input[name="sourceDetector"]').fill('500');
    const fieldError = form.locator('#error-sourceDetector');
    await fieldError.waitFor();
    check((await fieldError.innerText()) === 'Source to detector: got 500, expected a distance greater than the source to isocentre distance (600 mm)', `field message: ${await fieldError.innerText()}`);
    check((await form.locator('input[name="sourceDetector"]').getAttribute('aria-invalid')) === 'true', 'the wrong field is marked');
    check((await form.locator('input[name="pitchU"]').getAttribute('aria-invalid')) === 'false', 'the valid edit is not');
    await form.locator('button.primary').click();
    check(/^Not applied: this field is not valid: Source to detector$/.test(await form.locator('#geometry-error').innerText()), `summary: ${await form.locator('#geometry-error').innerText()}`);
    check((await form.locator('input[name="pitchU"]').inputValue()) === '1.05', 'the valid edit is kept');
    check(/345 × 1 mm, .*detector 1000 mm/.test(await page.locator('rf-scan-library li').first().innerText()), 'nothing was applied');
    await shot(page, '1280-geometry');
    await form.locator('button', { hasText: 'Undo edits' }).click();
    check((await form.locator('input[name="pitchU"]').inputValue()) === '1', 'undo restores the stored geometry');
  });

  await h.step(`${mode}: a refused file is named, and what to do is said in the page's words (no command-line options)`, async () => {
    const bare = Buffer.concat([Buffer.from('NRRD0004\ntype: float\ndimension: 3\nsizes: 4 1 3\nendian: little\nencoding: raw\n\n'), Buffer.alloc(48)]);
    await page.locator('rf-scan-library rf-file-drop input[type="file"]').setInputFiles({ name: 'bare.nrrd', mimeType: 'application/octet-stream', buffer: bare });
    const err = page.locator('#import-error');
    await err.waitFor({ timeout: 30_000 });
    const text = await err.innerText();
    check(/bare\.nrrd: .*the file carries no geometry; add its geometry \(a \.json file\) to the same import/.test(text) && !/--[a-z]/.test(text), `message: ${text}`);
    await page.locator('#import-error button').click();
  });

  await h.step(`${mode}: a run interrupted by a reload is shown as interrupted with its recipe, and runs again in one click`, async () => {
    await page.locator('#tab-reconstruct').click();
    await page.locator('#field-extend').selectOption('none');
    await startLongRun(page);
    await page.reload();
    await page.locator('rf-scan-library li').first().waitFor({ timeout: 60_000 });
    await page.locator('#tab-reconstruct').click();
    const job = page.locator('rf-run-queue li[data-state="interrupted"]');
    await job.waitFor({ timeout: 30_000 });
    const text = await job.innerText();
    check(/FBP, no correction, .*3072 px × 0\.1875 mm/.test(text) && /reloaded or closed while it ran/.test(text), `interrupted job: ${text}`);
    check((await page.locator('rf-run-queue li[data-state="done"]').count()) === 5, 'the finished runs are still listed');
    await shot(page, '1280-interrupted');
    await job.locator('button', { hasText: 'Run again' }).click();
    const again = page.locator('rf-run-queue li[data-state="running"]');
    await again.waitFor({ timeout: 30_000 });
    check(/3072 px/.test(await again.innerText()), 'the same recipe runs');
    await again.locator('button', { hasText: 'Cancel' }).click();
    await page.locator('rf-run-queue li[data-state="cancelled"]').waitFor({ timeout: 30_000 });
    check(problems.length === 0, problems.join(' | '));
  });
  await page.close();
}
