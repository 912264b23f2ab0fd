// Builds the page (npm run build) when dist/index.html is missing or older than its sources.
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';

const SOURCES = ['web', 'assembly', 'vite.config.ts', 'scripts/vite-csp.mjs', 'scripts/vite-ort.mjs', 'scripts/build-engine.mjs', 'scripts/build-ort.mjs', 'package.json'];

/** Newest modification time under the page's sources, ms. */
function newestSource(root) {
  let newest = 0;
  const walk = (p) => {
    const s = statSync(p);
    if (s.isDirectory()) readdirSync(p).forEach((n) => { walk(join(p, n)); });
    else newest = Math.max(newest, s.mtimeMs);
  };
  for (const p of SOURCES) if (existsSync(join(root, p))) walk(join(root, p));
  return newest;
}

/** Runs `npm run build` in `root` unless dist/ and build/ are newer than every source (or `force`). */
export function ensurePageBuilt(root, force = false) {
  const page = join(root, 'dist/index.html');
  const stale = !existsSync(page) || !existsSync(join(root, 'build/cli.mjs')) || statSync(page).mtimeMs < newestSource(root);
  if (!stale && !force) return false;
  console.log('building the page (npm run build)…');
  execFileSync('npm', ['run', 'build'], { cwd: root, stdio: 'inherit' });
  return true;
}
