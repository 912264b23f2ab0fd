// Queue steps the browser tests share: queue the recipe as the form stands and wait for its job,
// and start a long run (a fine grid) to interrupt or cancel.
import { check } from './harness.mjs';

export const JOB_TIMEOUT = 10 * 60_000;

/** Queues the recipe and waits until the queue lists `count` jobs. */
export async function queueAndWait(page, count) {
  await page.locator('#queue-recipe').click();
  await page.locator('rf-run-queue li').nth(count - 1).waitFor();
}

/** Queues the recipe as the form stands and waits until its job is done (`what` names it in a failure). */
export async function queueAndFinish(page, what) {
  const before = await page.locator('rf-run-queue li').count();
  await queueAndWait(page, before + 1);
  const job = page.locator('rf-run-queue li').nth(before);
  await job.and(page.locator('[data-state="done"], [data-state="failed"]')).waitFor({ timeout: JOB_TIMEOUT });
  check((await job.getAttribute('data-state')) === 'done', `${what}: ${await job.innerText()}`);
}

/** Queues FBP on a 3072-pixel grid (seconds of work) and waits until it runs. */
export async function startLongRun(page) {
  await page.locator('#field-method').selectOption('fbp');
  await page.locator('rf-recipe-form input[value="custom"]').check();
  await page.locator('rf-recipe-form input[name="gridSize"]').fill('3072');
  await page.locator('rf-recipe-form input[name="gridPixel"]').fill('0.1875');
  await page.locator('#queue-recipe').click();
  await page.locator('rf-run-queue li[data-state="running"]').waitFor({ timeout: 30_000 }).catch(async (err) => {
    const jobs = await page.locator('rf-run-queue li').evaluateAll((ls) => ls.map((l) => `${l.dataset.state}: ${l.innerText.replace(/\s+/g, ' ')}`));
    throw new Error(`no job started: ${jobs.join(' | ')} (${err.message.split('\n')[0]})`);
  });
}
