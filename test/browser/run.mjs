// Browser tests of the built page (dist/index.html) in Debian's Chromium, driven by
// playwright-core: once served from a loopback static server (cross-origin isolated: shared
// engine memory) and once opened from disk (file://: separate memories). Builds the page first
// when it is missing or older than its sources. Prints "N passed, N failed"; exits 1 on failure.
// Usage: node test/browser/run.mjs [--rebuild] [--only http|file] [--priors-only] [--first-hour-only] [--knowledge-only] [--big-cone-only]
import { execSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';
import { cliReference } from './cli-reference.mjs';
import { firstHourTests } from './first-hour-tests.mjs';
import { knowledgeTests } from './knowledge-tests.mjs';
import { coneReference } from './cli-cone-reference.mjs';
import { Harness } from './harness.mjs';
import { pageTests } from './page-tests.mjs';
import { bigConeTests } from './big-cone-tests.mjs';
import { priorReference } from './prior-reference.mjs';
import { priorTests } from './prior-tests.mjs';
import { ensurePageBuilt } from '../../scripts/page-build.mjs';
import { serveDirectory } from '../../scripts/serve-page.mjs';

const root = resolve(import.meta.dirname, '../..');
const dist = join(root, 'dist/index.html');
const artifacts = join(root, 'test-artifacts');
const argv = process.argv.slice(2);
const only = argv.includes('--only') ? argv[argv.indexOf('--only') + 1] : undefined;
/** Only the network-prior steps (on a fresh profile the page makes the demo scan itself). */
const priorsOnly = argv.includes('--priors-only');
/** Only the steps of the large cone-beam path (big-cone-tests.mjs). */
const bigConeOnly = argv.includes('--big-cone-only');
/** Only the first-hour steps on laptop screens (first-hour-tests.mjs). */
const firstHourOnly = argv.includes('--first-hour-only');
/** Only the knowledge steps on laptop screens (knowledge-tests.mjs). */
const knowledgeOnly = argv.includes('--knowledge-only');
/** Only the laptop-screen phases. */
const laptopOnly = firstHourOnly || knowledgeOnly;

function chromiumPath() {
  try {
    return execSync('command -v chromium', { encoding: 'utf8', shell: '/bin/bash' }).trim();
  } catch {
    throw new Error("Debian's chromium is not installed: run apt-get install -y chromium (tests never download a browser)");
  }
}

const FLAGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

async function main() {
  const h = new Harness();
  let executablePath;
  try {
    ensurePageBuilt(root, argv.includes('--rebuild'));
    executablePath = chromiumPath();
  } catch (err) {
    console.error(err.message);
    console.log('0 passed, 1 failed');
    return 1;
  }
  mkdirSync(artifacts, { recursive: true });
  let reference;
  if (!laptopOnly && !bigConeOnly) await h.step('command-line reference: the demo job through build/cli.mjs', async () => {
    reference = cliReference(root);
  });
  if (!priorsOnly && !laptopOnly && !bigConeOnly) {
    await h.step('command-line reference: the cone-beam demo job through build/cli.mjs', async () => {
      reference.cone = coneReference(root);
    });
  }
  let prior;
  if (reference) {
    await h.step('command-line reference: test networks and rimfill prior-check on the demo scan', async () => {
      prior = await priorReference(root, reference.dir);
    });
  }
  const server = await serveDirectory(join(root, 'dist'));
  const modes = [
    { mode: 'http', url: server.url, origin: new URL(server.url).origin },
    { mode: 'file', url: pathToFileURL(dist).href, origin: 'file://' },
  ].filter((m) => !only || m.mode === only);
  try {
    for (const m of laptopOnly ? [] : modes) {
      console.log(`\n${m.mode === 'http' ? `served from ${m.url} (cross-origin isolated)` : `opened from disk, ${m.url}`}`);
      const profile = mkdtempSync(join(tmpdir(), 'rimfill-profile-'));
      const context = await chromium.launchPersistentContext(profile, { executablePath, args: FLAGS, viewport: { width: 1440, height: 1000 }, acceptDownloads: true });
      try {
        if (!priorsOnly && !bigConeOnly) await pageTests(h, { context, ...m, artifacts, reference });
        if (!priorsOnly) await bigConeTests(h, { context, ...m, root });
        if (prior) await priorTests(h, { context, ...m, artifacts, prior });
      } finally {
        await context.close();
        rmSync(profile, { recursive: true, force: true });
      }
    }
    // Laptop screens, once each, on a fresh profile (the page opened from disk unless --only http).
    const laptop = [
      { name: 'first hour', run: firstHourTests, skip: priorsOnly || knowledgeOnly || bigConeOnly },
      { name: 'knowledge', run: knowledgeTests, skip: priorsOnly || firstHourOnly || bigConeOnly },
    ];
    for (const phase of laptop.filter((p) => !p.skip)) {
      const m = modes.find((x) => x.mode === 'file') ?? modes[0];
      const profile = mkdtempSync(join(tmpdir(), 'rimfill-profile-'));
      const context = await chromium.launchPersistentContext(profile, { executablePath, args: FLAGS, viewport: { width: 1280, height: 800 } });
      try {
        console.log(`\n${phase.name} on laptop screens, ${m.mode === 'http' ? 'served' : 'opened from disk'}`);
        await phase.run(h, { context, ...m, artifacts });
      } finally {
        await context.close();
        rmSync(profile, { recursive: true, force: true });
      }
    }
  } finally {
    await server.close();
    if (reference) rmSync(reference.dir, { recursive: true, force: true });
    if (reference?.cone) rmSync(reference.cone.dir, { recursive: true, force: true });
  }
  return h.finish();
}

main().then((code) => process.exit(code), (err) => {
  console.error(err);
  console.log('0 passed, 1 failed');
  process.exit(1);
});
