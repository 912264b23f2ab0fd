// What a DBP result does not determine, as the page shows it (run after knowledge-tests.mjs has
// made "DBP, field of view only, 1 known region" on the demo scan and ticked it beside FBP +
// water): the striped violet overlay and its legend over the DBP panel only, its switch, the
// read-out and region figures that give no value there, and the mask and the report exported.
// The outside check is the scan's geometry: the demo's flat-detector fan (345 channels of 1 mm,
// source 600 mm from the isocentre and 1000 mm from the detector) measures a field of view of
// radius R sin(atan(u_max / D)) = 600 sin(atan(172.5 / 1000)) = 102.0 mm (common practice), and
// with the chords through the known region every chord crosses it (Kudo, Courdurier, Noo &
// Defrise 2008, REFERENCES.md [kudo2008]): the undetermined part is the grid outside that circle.
// Screenshots: test-artifacts/knowledge-<mode>-1280-undetermined-*.png.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { check } from './harness.mjs';
import { parseFloatNrrd } from './files.mjs';
import { GRID, drag, screenPoint } from './panel-points.mjs';

const FOV_MM = 600 * Math.sin(Math.atan(172.5 / 1000));
/** Points outside the field and clear of the body's outline and every mark; points inside it, clear of the marks. */
const OUTSIDE = [{ x: -150, y: -150 }, { x: 200, y: 150 }, { x: 0, y: -200 }];
const INSIDE = [{ x: -40, y: -40 }, { x: 50, y: -10 }];

/** RGB of the panel's canvas at image point p (mm), as drawn. */
async function colourAt(panel, p) {
  const q = await screenPoint(panel, p.x, p.y);
  return panel.locator('canvas').evaluate((c, at) => {
    const r = c.getBoundingClientRect(), dpr = c.width / r.width;
    return Array.from(c.getContext('2d').getImageData(Math.round((at.x - r.left) * dpr), Math.round((at.y - r.top) * dpr), 1, 1).data).slice(0, 3);
  }, q);
}

const violet = ([r, g, b]) => b - g > 30 && r - g > 15;
const grey = ([r, g, b]) => Math.abs(r - g) <= 2 && Math.abs(g - b) <= 2;

async function download(page, click) {
  const [dl] = await Promise.all([page.waitForEvent('download'), click()]);
  return { name: dl.suggestedFilename(), bytes: readFileSync(await dl.path()) };
}

export async function undeterminedSteps(h, { page, mode, artifacts, shot }) {
  const dbp = page.locator('rf-image-viewer', { hasText: 'DBP, field of view only' });
  const fbp = page.locator('rf-image-viewer', { hasText: 'FBP, water cylinder, ramp' });
  const toggle = page.locator('rf-results-view rf-viewer-toolbar input[name="show-undetermined"]');
  const away = () => page.mouse.move(2, 2); // no cursor marks over the panels

  await h.step(`${mode}: the DBP result is drawn with its undetermined part striped violet (outside the 102 mm field), with a legend and a switch; FBP has none`, async () => {
    await dbp.locator('canvas').scrollIntoViewIfNeeded();
    await away();
    check(await toggle.isChecked(), 'the overlay is on by default');
    check(/^Not determined \(no value\)$/.test(await dbp.locator('#undetermined-legend').innerText()), 'the DBP panel has the legend');
    check((await fbp.locator('#undetermined-legend').count()) === 0, 'the FBP panel has no legend');
    for (const p of OUTSIDE) {
      const [d, f] = [await colourAt(dbp, p), await colourAt(fbp, p)];
      check(violet(d), `DBP at (${p.x}, ${p.y}) mm, outside the field: ${d}`);
      check(grey(f), `FBP at (${p.x}, ${p.y}) mm: ${f}`);
    }
    for (const p of INSIDE) {
      const d = await colourAt(dbp, p);
      check(grey(d), `DBP at (${p.x}, ${p.y}) mm, inside the field: ${d}`);
    }
    await shot(page, '1280-undetermined-on');
    await dbp.screenshot({ path: join(artifacts, `knowledge-${mode}-1280-undetermined-panel.png`) });
    await toggle.uncheck();
    await away();
    check((await dbp.locator('#undetermined-legend').count()) === 0, 'switched off: no legend');
    for (const p of OUTSIDE) check(grey(await colourAt(dbp, p)), `switched off: DBP at (${p.x}, ${p.y}) mm is grey`);
    await shot(page, '1280-undetermined-off');
    await toggle.check();
    check(violet(await colourAt(dbp, OUTSIDE[0])), 'switched on again');
  });

  await h.step(`${mode}: over undetermined pixels the cursor and a region give no value; inside the field they do`, async () => {
    const at = await screenPoint(dbp, OUTSIDE[0].x, OUTSIDE[0].y);
    await page.mouse.move(at.x, at.y);
    const readout = dbp.locator('.readout');
    check(/not determined \(no value/.test(await readout.innerText()), `read-out outside: ${await readout.innerText()}`);
    const inside = await screenPoint(dbp, INSIDE[0].x, INSIDE[0].y);
    await page.mouse.move(inside.x, inside.y);
    check(/: -?\d+ HU$/.test((await readout.innerText()).trim()), `read-out inside: ${await readout.innerText()}`);
    await page.locator('rf-results-view rf-viewer-toolbar button[data-tool="region"]').click();
    await drag(page, dbp, OUTSIDE[0], { x: OUTSIDE[0].x + 10, y: OUTSIDE[0].y });
    const row = page.locator('rf-region-table tr[data-label^="DBP, field of view only"]');
    check(/not determined \(no value\)/.test(await row.innerText()) && /\+\d+ not determined/.test(await row.innerText()), `DBP region row: ${await row.innerText()}`);
    const fbpRow = page.locator('rf-region-table tr[data-label^="FBP, water cylinder, ramp"]');
    check(Number.isFinite(Number(await fbpRow.locator('td').nth(1).innerText())), `FBP region row: ${await fbpRow.innerText()}`);
    await row.scrollIntoViewIfNeeded();
    await shot(page, '1280-undetermined-region');
    await page.locator('rf-results-view rf-viewer-toolbar button[data-tool="window"]').click();
  });

  await h.step(`${mode}: the mask downloads as an NRRD of the grid marking exactly the pixels outside the field; the report states the share`, async () => {
    await dbp.locator('canvas').click({ position: { x: 5, y: 5 } });
    const file = await download(page, () => page.locator('#export-undetermined').click());
    check(/not-determined\.nrrd$/.test(file.name), `file name: ${file.name}`);
    const nrrd = parseFloatNrrd(file.bytes);
    check(nrrd.sizes.join(' ') === `${GRID.n} ${GRID.n}` && nrrd.keys['rimfill.content'] === 'undetermined', `header: ${JSON.stringify({ ...nrrd.fields, ...nrrd.keys })}`);
    let marked = 0, wrong = 0;
    for (let q = 0; q < nrrd.data.length; q++) {
      const x = ((q % GRID.n) - (GRID.n - 1) / 2) * GRID.pixel, y = (Math.floor(q / GRID.n) - (GRID.n - 1) / 2) * GRID.pixel;
      const r = Math.hypot(x, y);
      marked += nrrd.data[q];
      if (Math.abs(r - FOV_MM) > 1.5 && nrrd.data[q] !== (r > FOV_MM ? 1 : 0)) wrong++;
    }
    check(wrong === 0, `${wrong} pixels marked against the geometry (field of view ${FOV_MM.toFixed(1)} mm)`);
    const share = (100 * marked) / nrrd.data.length;
    const report = (await download(page, () => page.locator('#export-report').click())).bytes.toString('utf8');
    const line = /<li>[^<]*<span class="dot"[^>]*><\/span>DBP, field of view only[^<]*<\/li>/.exec(report)?.[0] ?? '';
    check(line.includes(`${share.toFixed(1)}% of the image (0.0% of the field of view)`), `report: ${line || 'no Not determined section'} (mask: ${share.toFixed(1)}%)`);
  });

  await h.step(`${mode}: the comparison table marks DBP's data residual (measured rays cross its air fill), not FBP's`, async () => {
    const cellOf = (label) => page.locator(`rf-metrics-table tr[data-label^="${label}"] td[data-metric="residual"]`).first();
    const dbpCell = cellOf('DBP, field of view only');
    const fbpCell = cellOf('FBP, water cylinder, ramp');
    check(/^\d+\.\d%†$/.test((await dbpCell.innerText()).trim()), `DBP residual cell: ${await dbpCell.innerText()}`);
    check(/^\d+\.\d%$/.test((await fbpCell.innerText()).trim()), `FBP residual cell: ${await fbpCell.innerText()}`);
    check(/† The image leaves pixels undetermined/.test(await page.locator('rf-metrics-table #residual-caveat').innerText()), 'the table says what the mark means');
    await page.locator('rf-metrics-table').screenshot({ path: join(artifacts, `knowledge-${mode}-1280-undetermined-table.png`) });
  });
}
