// Knowledge at work in the page, as a physicist uses it on the demo scan (1280 x 800, then
// 1366 x 768, on a fresh profile): the guidance panel reads the scan's truncation report; FBP
// with water cylinder extension is run; a region is drawn on its result in the heart and given
// the value the ground truth shows there; FBP with that region brings the error inside the
// measured field down in the comparison table; an outline ellipse is drawn and FBP extended
// from it does the same; a region outside the field is refused with its name and nothing is
// stored; after a reload the knowledge is still there; the demo's own button queues its runs.
// The outside check is the scan's ground truth (the thorax phantom, REFERENCES.md
// [thorax-phantom]). The bounds (below 0.8 of FBP + water's error) are regression pins: on this
// scan, with its photon noise and the ramp filter (noise is most of what is left), the page
// measured 130 HU with water alone, 95 with the region, 94 from the outline. Screenshots go to
// test-artifacts/knowledge-*.png.
import { join } from 'node:path';
import { check } from './harness.mjs';
import { JOB_TIMEOUT, queueAndFinish } from './queue-steps.mjs';
import { overflowing } from './layout.mjs';
import { drag, screenPoint } from './panel-points.mjs';
import { undeterminedSteps } from './undetermined-steps.mjs';

/** Inside-FOV RMSE (HU) of the metrics table row whose label starts with `prefix`. */
async function insideRmse(page, prefix) {
  const row = page.locator(`rf-metrics-table tr[data-label^="${prefix}"]`);
  await row.locator('td[data-metric="rmse"]').nth(1).waitFor({ timeout: 30_000 });
  return Number(await row.locator('td[data-metric="rmse"]').nth(1).innerText());
}

/** Ticks exactly the results whose labels start with the prefixes (unticking the others first, so no choice is asked). */
async function compareOnly(page, prefixes) {
  const items = page.locator('rf-result-list li');
  const n = await items.count();
  const labels = await items.locator('label').allInnerTexts();
  for (const pass of ['untick', 'tick']) {
    for (let i = 0; i < n; i++) {
      const want = prefixes.some((p) => labels[i].startsWith(p));
      const box = items.nth(i).locator('input[type="checkbox"]');
      if ((await box.isChecked()) !== want && want === (pass === 'tick')) await box.click();
    }
  }
}

/** Waits until the queue holds at least `count` jobs and none is waiting or running; returns their states. */
async function queueSettled(page, count) {
  const t0 = Date.now();
  for (;;) {
    const states = await page.locator('rf-run-queue li').evaluateAll((ls) => ls.map((l) => l.dataset.state));
    if (states.length >= count && !states.some((x) => x === 'waiting' || x === 'running')) return states;
    if (Date.now() - t0 > JOB_TIMEOUT) throw new Error(`the queue did not settle: ${states.join(', ')}`);
    await page.waitForTimeout(1000);
  }
}

export async function knowledgeTests(h, { context, mode, url, artifacts }) {
  const shot = (page, name, fullPage = false) => page.screenshot({ path: join(artifacts, `knowledge-${mode}-${name}.png`), fullPage });
  const page = await context.newPage();
  const problems = [];
  page.on('pageerror', (e) => problems.push(`script error: ${e.message}`));
  let waterRmse = Number.NaN;

  const ok = await h.step(`${mode} 1280 x 800: the guidance panel reads the scan's truncation, and FBP with water cylinder extension runs`, async () => {
    await page.goto(url);
    await page.locator('rf-scan-library li').first().waitFor({ timeout: 180_000 });
    await page.locator('#tab-reconstruct').click();
    const scanLine = page.locator('rf-method-guidance #guidance-scan');
    await scanLine.waitFor({ timeout: 60_000 });
    const text = await scanLine.innerText();
    check(/^(Severe|Moderate) truncation: the field of view \(\d+ mm\) covers \d+% of the object's estimated width \(\d+ mm\), cut off on both sides, the object reaching up to \d+ mm beyond the edges\.$/.test(text), `guidance: ${text}`);
    check(/^You have given nothing beyond the data yet\./.test(await page.locator('rf-method-guidance #guidance-given').innerText()), 'nothing given yet');
    const mine = page.locator('rf-method-guidance tr.yours');
    check((await mine.count()) === 1 && /FBP with water cylinder extension/.test(await mine.innerText()), `marked row: ${await mine.allInnerTexts()}`);
    // One row per kind of knowledge and choice: FBP for each, DBP for a region (with and without the outline).
    check((await page.locator('rf-method-guidance tbody tr').count()) === 6, 'one row per kind of knowledge and choice');
    check(/None kept with this scan/.test(await page.locator('rf-recipe-form #no-knowledge').innerText()), 'the form says no knowledge is kept');
    await shot(page, '1280-reconstruct');
    await queueAndFinish(page, 'FBP with water cylinder');
    await page.locator('#tab-images').click();
    waterRmse = await insideRmse(page, 'FBP, water cylinder, ramp');
    check(waterRmse > 60, `FBP + water leaves ${waterRmse} HU inside the field (the bench: about 105)`);
  });
  if (!ok) return;

  await h.step(`${mode}: a region drawn in the heart on the FBP result, given the value the ground truth shows there, is kept with the scan; one outside the field is refused by name`, async () => {
    const fbp = page.locator('rf-image-viewer').first();
    await page.locator('rf-results-view rf-viewer-toolbar button[data-tool="region"]').click();
    await drag(page, fbp, { x: 4, y: 30 }, { x: 13, y: 30 });
    const truthRow = page.locator('rf-region-table tbody tr', { hasText: 'Ground truth' });
    const truthHu = Math.round(Number(await truthRow.locator('td').nth(1).innerText()));
    check(Math.abs(truthHu - 44) <= 3, `the ground truth reads ${truthHu} HU in the heart (muscle at 60 keV: 44 HU, NIST SRD 126)`);
    const regions = page.locator('rf-known-regions');
    check(Math.abs(Number(await regions.locator('input[name="new-region-x"]').inputValue()) - 4) < 1.5, 'the drawn centre fills x');
    await regions.locator('input[name="new-region-hu"]').fill(String(truthHu));
    await regions.locator('input[name="new-region-label"]').fill('heart');
    await regions.locator('#add-known-region').click();
    await regions.locator('#known-regions li').first().waitFor({ timeout: 30_000 });
    const item = await regions.locator('#known-regions li').first().innerText();
    check(/known region 1 "heart" \(circle at [\d.]+, [\d.]+ mm, r [\d.]+ mm, \d+ HU\)/.test(item) && /drawn on “FBP, water cylinder/.test(item), `listed: ${item}`);
    // Outside the measured field (radius about 102 mm): refused, naming the region; nothing stored.
    await drag(page, fbp, { x: 150, y: 0 }, { x: 160, y: 0 });
    await regions.locator('input[name="new-region-hu"]').fill('0');
    await regions.locator('input[name="new-region-label"]').fill('');
    await regions.locator('#add-known-region').click();
    const err = page.locator('rf-knowledge-panel #knowledge-error');
    await err.waitFor({ timeout: 30_000 });
    check(/^Not stored: known region 2 \(circle at 1[45]\d(\.\d)?, -?[\d.]+ mm, r [\d.]+ mm, 0 HU\): \d+% of it lies outside the measured field of view/.test(await err.innerText()), `refusal: ${await err.innerText()}`);
    check((await regions.locator('#known-regions li').count()) === 1, 'nothing was stored');
    await err.locator('button').click();
    await shot(page, '1280-region');
  });

  let regionRmse = Number.NaN;
  await h.step(`${mode}: FBP with the known region: the region is in the recipe, reads its value, and the error inside the field drops in the comparison table`, async () => {
    await page.locator('#tab-reconstruct').click();
    const ticks = page.locator('rf-recipe-form input[name="knowledge-item"]');
    check((await ticks.count()) === 1 && (await ticks.first().isChecked()), 'the region is offered, ticked');
    check(/You have given a known region\./.test(await page.locator('rf-method-guidance #guidance-given').innerText()), 'the guidance follows');
    const marked = (await page.locator('rf-method-guidance tr.yours').allInnerTexts()).join(' | ');
    check(/FBP fitted to the region/.test(marked) && /DBP through the region/.test(marked), `the marked rows follow: ${marked}`);
    await queueAndFinish(page, 'FBP with the known region');
    await page.locator('#tab-images').click();
    regionRmse = await insideRmse(page, 'FBP, water cylinder, 1 known region');
    console.log(`       inside the field: FBP + water ${waterRmse} HU, with the region ${regionRmse} HU`);
    check(regionRmse < 0.8 * waterRmse, `inside the field: ${regionRmse} HU with the region against ${waterRmse} HU with water alone`);
    const used = page.locator('rf-knowledge-report .result[data-label^="FBP, water cylinder, 1 known region"]');
    await used.waitFor();
    const after = Number(await used.locator('td[data-metric="after"]').first().innerText());
    check(Math.abs(after - 44) <= 5, `the region reads ${after} HU after the correction`);
    await shot(page, '1280-images-region', true);
  });

  await h.step(`${mode}: DBP with the known region: the error inside the field drops below FBP + water, and the result says which part is not determined`, async () => {
    await page.locator('#tab-reconstruct').click();
    await page.locator('#field-method').selectOption('dbp');
    await queueAndFinish(page, 'DBP with the known region');
    // Off the queue (the result stays), so the demo's runs below find the queue as they expect.
    await page.locator('rf-run-queue li', { hasText: 'DBP, field of view only' }).locator('button', { hasText: 'Remove' }).click();
    await page.locator('rf-run-queue li', { hasText: 'DBP, field of view only' }).waitFor({ state: 'detached', timeout: 30_000 });
    await page.locator('#field-method').selectOption('fbp');
    await page.locator('#tab-images').click();
    await compareOnly(page, ['FBP, water cylinder, ramp', 'DBP, field of view only, 1 known region']);
    const dbpRmse = await insideRmse(page, 'DBP, field of view only, 1 known region');
    console.log(`       inside the field: DBP with the region ${dbpRmse} HU`);
    // Noo, Clackdoyle & Pack 2004; Kudo et al. 2008 (REFERENCES.md): a known region fixes the interior; the bench measures 85 HU against 105 for water.
    check(dbpRmse < waterRmse, `inside the field: DBP ${dbpRmse} HU against ${waterRmse} HU with water alone`);
    const warnings = (await page.locator('rf-results-view p.warning').allInnerTexts()).join(' | ');
    check(/DBP, field of view only.*outside the measured field of view .* not determined by DBP/.test(warnings), `the undetermined part is stated: ${warnings}`);
    await shot(page, '1280-images-dbp', true);
  });

  await undeterminedSteps(h, { page, mode, artifacts, shot });

  await h.step(`${mode}: an outline ellipse drawn round the body, FBP extended from it alone: the error inside the field drops`, async () => {
    const fbp = page.locator('rf-image-viewer').first();
    await page.locator('rf-results-view rf-viewer-toolbar button[data-tool="ellipse"]').click();
    await drag(page, fbp, { x: 0, y: 0 }, { x: 172, y: 121 });
    const editor = page.locator('rf-outline-editor');
    const a = Number(await editor.locator('input[name="outline-a"]').inputValue());
    check(Math.abs(a - 172) < 3, `the drawn semi-axis fills the field: ${a}`);
    check(/The data suggest/.test(await editor.locator('#suggested-outline').innerText()), 'the suggested outline is offered');
    await editor.locator('#set-outline-ellipse').click();
    await editor.locator('#current-outline').waitFor({ timeout: 30_000 });
    check(/^outline \(ellipse at /.test(await editor.locator('#current-outline').innerText()), 'the outline is kept');
    await page.locator('#tab-reconstruct').click();
    await page.locator('rf-recipe-form input[name="knowledge-item"]').first().uncheck();
    await page.locator('#field-extend').selectOption('outline');
    check(/You have given a known region and the outline\./.test(await page.locator('rf-method-guidance #guidance-given').innerText()), 'the guidance names both');
    await queueAndFinish(page, 'FBP extended from the outline');
    await page.locator('#tab-images').click();
    await compareOnly(page, ['FBP, water cylinder, ramp', 'FBP, water cylinder, 1 known region', 'FBP, outline filled with water']);
    const outlineRmse = await insideRmse(page, 'FBP, outline filled with water');
    console.log(`       inside the field: from the outline ${outlineRmse} HU`);
    check(outlineRmse < 0.8 * waterRmse, `inside the field: ${outlineRmse} HU from the outline against ${waterRmse} HU with water alone`);
    const out = await overflowing(page);
    check(out.length === 0, `at 1280 x 800: ${out.slice(0, 6).join('; ')}`);
    await shot(page, '1280-images-outline');
    await shot(page, '1280-images-outline-full', true);
  });

  await h.step(`${mode}: after a reload the known region and the outline are still kept with the scan and offered to recipes`, async () => {
    await page.reload();
    await page.locator('rf-scan-library li').first().waitFor({ timeout: 60_000 });
    await page.locator('#tab-images').click();
    await page.locator('rf-known-regions #known-regions li').first().waitFor({ timeout: 30_000 });
    check(/"heart"/.test(await page.locator('rf-known-regions #known-regions li').first().innerText()), 'the region');
    check(/^outline \(ellipse/.test(await page.locator('rf-outline-editor #current-outline').innerText()), 'the outline');
    await page.locator('#tab-reconstruct').click();
    check((await page.locator('rf-recipe-form input[name="knowledge-item"]').count()) === 2, 'both offered to the recipe');
  });

  await h.step(`${mode}: a region's value and label edited; the outline from a threshold of the ground truth (body and arms), then a polygon clicked corner by corner`, async () => {
    await page.locator('#tab-images').click();
    const regions = page.locator('rf-known-regions');
    const item = regions.locator('#known-regions li').first();
    await item.locator('input[name="region-hu"]').fill('45');
    await item.locator('input[name="region-label"]').fill('heart muscle');
    await item.locator('button', { hasText: 'Save' }).click();
    await page.waitForFunction(() => {
      const kr = document.querySelector('rf-app').shadowRoot.querySelector('rf-results-view').shadowRoot.querySelector('rf-knowledge-panel').shadowRoot.querySelector('rf-known-regions');
      return /"heart muscle" .* 45 HU/.test(kr.shadowRoot.querySelector('#known-regions li').innerText);
    }, undefined, { timeout: 30_000 });
    // Highlight the ground truth (a click with the contrast tool), then take the outline from it.
    await page.locator('rf-results-view rf-viewer-toolbar button[data-tool="window"]').click();
    const truth = page.locator('rf-image-viewer', { hasText: 'Ground truth' });
    await truth.locator('canvas').scrollIntoViewIfNeeded();
    await truth.locator('canvas').click({ position: { x: 5, y: 5 } });
    const editor = page.locator('rf-outline-editor');
    await editor.locator('#threshold-outline').click();
    await page.locator('rf-outline-editor #current-outline', { hasText: 'threshold -500 HU of the reference image' }).waitFor({ timeout: 30_000 });
    check(/\(3 parts, holes filled\)/.test(await editor.locator('#current-outline').innerText()), `source: ${await editor.locator('#current-outline').innerText()}`);
    await truth.locator('canvas').scrollIntoViewIfNeeded();
    await shot(page, '1280-threshold');
    await page.locator('rf-results-view rf-viewer-toolbar button[data-tool="polygon"]').click();
    const fbp = page.locator('rf-image-viewer').first();
    await fbp.locator('canvas').scrollIntoViewIfNeeded();
    for (const [x, y] of [[-180, -130], [180, -130], [195, 0], [180, 130], [-180, 130], [-180, -130]]) {
      const q = await screenPoint(fbp, x, y);
      await page.mouse.click(q.x, q.y);
    }
    const status = await editor.locator('#polygon-status').innerText();
    check(/^Polygon tool: 5 corners, closed\.$/.test(status), `polygon: ${status}`);
    await editor.locator('#set-outline-polygon').click();
    await page.locator('rf-outline-editor #current-outline', { hasText: 'outline (polygon of 5 points)' }).waitFor({ timeout: 30_000 });
    check(/^Polygon tool: click the corners/.test(await editor.locator('#polygon-status').innerText()), 'the stored polygon is no longer a draft');
    await fbp.locator('canvas').scrollIntoViewIfNeeded();
    await shot(page, '1280-polygon');
  });

  await h.step(`${mode} 1366 x 768: the Images tab with the knowledge panel and the Reconstruct tab with the guidance fit the screen`, async () => {
    await page.setViewportSize({ width: 1366, height: 768 });
    await page.locator('#tab-images').click();
    await page.waitForTimeout(500);
    let out = await overflowing(page);
    check(out.length === 0, `Images: ${out.slice(0, 6).join('; ')}`);
    await shot(page, '1366-images', true);
    await page.locator('#tab-reconstruct').click();
    await page.waitForTimeout(300);
    out = await overflowing(page);
    check(out.length === 0, `Reconstruct: ${out.slice(0, 6).join('; ')}`);
    await shot(page, '1366-reconstruct', true);
    await page.setViewportSize({ width: 1280, height: 800 });
  });

  await h.step(`${mode}: the demo's button adds its region and outline and queues FBP with each; their errors inside the field are below FBP + water's`, async () => {
    await page.locator('#tab-images').click();
    // The heart was given 45 HU above; the demo says 44 there: contradictory, refused by name, nothing stored.
    await page.locator('rf-knowledge-panel #knowledge-demo').click();
    const err = page.locator('rf-knowledge-panel #knowledge-error');
    await err.waitFor({ timeout: 30_000 });
    check(/^Not stored: known region 1 "heart muscle" \(circle at .*, 45 HU\) and known region 2 "heart" \(circle at 4, 30 mm, r 10 mm, 44 HU\) overlap but give different values: they contradict each other/.test(await err.innerText()), `refusal: ${await err.innerText()}`);
    check((await page.locator('rf-known-regions #known-regions li').count()) === 1, 'nothing was stored');
    check(/polygon of 5 points/.test(await page.locator('rf-outline-editor #current-outline').innerText()), 'the outline stayed');
    await err.locator('button').click();
    const item = page.locator('rf-known-regions #known-regions li').first();
    await item.locator('input[name="region-hu"]').fill('44');
    await item.locator('button', { hasText: 'Save' }).click();
    await page.locator('rf-known-regions #known-regions li', { hasText: '44 HU' }).waitFor({ timeout: 30_000 });
    await page.locator('rf-knowledge-panel #knowledge-demo').click();
    await page.locator('#tab-reconstruct').click();
    // Three runs were stored before; the demo adds three (with the Hann window, FBP + water too).
    const states = await queueSettled(page, 6);
    check(states.filter((x) => x === 'done').length === 6, `jobs: ${(await page.locator('rf-run-queue li').allInnerTexts()).join(' | ')}`);
    await page.locator('#tab-images').click();
    check((await page.locator('rf-known-regions #known-regions li').count()) >= 2, 'the demo region joins the list');
    const hann = (what) => `FBP, ${what}, hann`;
    await compareOnly(page, [hann('water cylinder'), hann('water cylinder, 2 known regions'), hann('outline filled with water')]);
    const [water, region, outline] = [await insideRmse(page, hann('water cylinder')), await insideRmse(page, hann('water cylinder, 2 known regions')), await insideRmse(page, hann('outline filled with water'))];
    console.log(`       inside the field (Hann window): FBP + water ${water} HU, the demo's two regions ${region} HU, its outline ${outline} HU`);
    // Regression pins: the figures above on this scan; the outside check is its ground truth.
    check(region < 0.7 * water && outline < 0.7 * water, `the demo's runs: ${region} and ${outline} HU against ${water} HU`);
    check(problems.length === 0, problems.join(' | '));
    await shot(page, '1280-demo', true);
  });
  await page.close();
}
