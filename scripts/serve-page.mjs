// A minimal static file server for the built page (dist/), on the loopback address only, with
// the headers that make the page cross-origin isolated (so the engine may share memory).
import { createServer } from 'node:http';
import { readFile, stat } from 'node:fs/promises';
import { extname, join, normalize, resolve } from 'node:path';

const TYPES = { '.html': 'text/html; charset=utf-8', '.js': 'text/javascript', '.wasm': 'application/wasm', '.png': 'image/png', '.json': 'application/json' };

/**
 * Serves `root` on 127.0.0.1 (port 0 = any free port). `isolated` adds COOP/COEP headers.
 * Resolves to { url, close() }.
 */
export function serveDirectory(root, { port = 0, isolated = true } = {}) {
  const base = resolve(root);
  const server = createServer(async (req, res) => {
    try {
      const path = decodeURIComponent(new URL(req.url, 'http://x').pathname);
      const file = normalize(join(base, path === '/' ? 'index.html' : path));
      if (!file.startsWith(base)) throw Object.assign(new Error('outside'), { code: 'ENOENT' });
      if (!(await stat(file)).isFile()) throw Object.assign(new Error('not a file'), { code: 'ENOENT' });
      const headers = { 'content-type': TYPES[extname(file)] ?? 'application/octet-stream', 'cache-control': 'no-store' };
      if (isolated) {
        headers['cross-origin-opener-policy'] = 'same-origin';
        headers['cross-origin-embedder-policy'] = 'require-corp';
      }
      res.writeHead(200, headers);
      res.end(await readFile(file));
    } catch (err) {
      res.writeHead(err.code === 'ENOENT' ? 404 : 500, { 'content-type': 'text/plain' });
      res.end(err.code === 'ENOENT' ? 'not found' : 'server error');
    }
  });
  return new Promise((resolveServer, reject) => {
    server.once('error', reject);
    server.listen(port, '127.0.0.1', () => {
      const { port: p } = server.address();
      resolveServer({ url: `http://127.0.0.1:${p}/`, close: () => new Promise((r) => server.close(() => r())) });
    });
  });
}
