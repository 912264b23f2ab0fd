// npm start: builds the page if needed, serves dist/ on this computer only (127.0.0.1) and
// opens it in the default browser; the page makes the demo scan on its first visit.
// The same single file also works opened straight from disk: dist/index.html.
// Options: --port N (default 5173), --no-open, --rebuild.
import { spawn } from 'node:child_process';
import { resolve, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { ensurePageBuilt } from './page-build.mjs';
import { serveDirectory } from './serve-page.mjs';
import { startBanner } from './page-banner.mjs';

const root = resolve(import.meta.dirname, '..');
const argv = process.argv.slice(2);
const portArg = argv.includes('--port') ? Number(argv[argv.indexOf('--port') + 1]) : 5173;
if (!Number.isInteger(portArg) || portArg < 0 || portArg > 65535) {
  console.error(`option --port: got ${argv[argv.indexOf('--port') + 1]}, expected a port number from 0 to 65535`);
  process.exit(2);
}

ensurePageBuilt(root, argv.includes('--rebuild'));
const server = await serveDirectory(join(root, 'dist'), { port: portArg }).catch(async (err) => {
  if (err.code !== 'EADDRINUSE') throw err;
  console.log(`port ${portArg} is taken; using a free one`);
  return serveDirectory(join(root, 'dist'), { port: 0 });
});
for (const line of startBanner(server.url, pathToFileURL(join(root, 'dist/index.html')).href)) console.log(line);

if (!argv.includes('--no-open')) {
  const opener = process.platform === 'darwin' ? 'open' : process.platform === 'win32' ? 'explorer' : 'xdg-open';
  const child = spawn(opener, [server.url], { stdio: 'ignore', detached: true });
  child.on('error', () => console.log(`Could not start a browser (${opener}); open ${server.url} yourself.`));
  child.unref();
}

const stop = () => server.close().then(() => process.exit(0));
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
