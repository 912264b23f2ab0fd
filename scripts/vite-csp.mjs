// Vite plugin: adds a Content-Security-Policy <meta> to the built single-file page, allowing
// exactly its own inline scripts and styles (by SHA-256 hash), Wasm compilation, workers from
// blob: URLs (inlined workers) and images from data:/blob: URLs; nothing may be fetched.
import { createHash } from 'node:crypto';

const sha256 = (text) => `'sha256-${createHash('sha256').update(text, 'utf8').digest('base64')}'`;

/** The policy for a page whose inline script and style bodies are given. */
export function policyFor(scripts, styles) {
  return [
    "default-src 'none'",
    `script-src ${scripts.map(sha256).join(' ')} 'wasm-unsafe-eval'`,
    "worker-src blob:",
    `style-src ${styles.length ? styles.map(sha256).join(' ') : "'none'"}`,
    'img-src data: blob:',
    "connect-src 'none'",
    "font-src 'none'",
    "object-src 'none'",
    "base-uri 'none'",
    "form-action 'none'",
  ].join('; ');
}

/** Inline <script> and <style> bodies of an HTML document. */
export function inlineBodies(html) {
  const scripts = [...html.matchAll(/<script\b[^>]*>([\s\S]*?)<\/script>/gi)].map((m) => m[1]);
  // Styles outside the scripts only (a script may hold "<style>" in a string).
  const outside = html.replace(/<script\b[^>]*>[\s\S]*?<\/script>/gi, '');
  const styles = [...outside.matchAll(/<style\b[^>]*>([\s\S]*?)<\/style>/gi)].map((m) => m[1]);
  return { scripts, styles };
}

export function contentSecurityPolicy() {
  return {
    name: 'rimfill-content-security-policy',
    enforce: 'post',
    apply: 'build',
    // After vite-plugin-singlefile's own 'post' handler (listed before this plugin) has inlined everything.
    generateBundle: { order: 'post', handler(_options, bundle) {
      for (const file of Object.values(bundle)) {
        if (file.type !== 'asset' || !file.fileName.endsWith('.html')) continue;
        const html = String(file.source);
        const head = html.slice(0, html.search(/<script\b/i) >>> 0);
        if (/http-equiv=["']?Content-Security-Policy/i.test(head)) this.error(`${file.fileName} already has a Content-Security-Policy`);
        const { scripts, styles } = inlineBodies(html);
        if (/<script\b[^>]*\bsrc=/i.test(html) || /<link\b[^>]*stylesheet/i.test(html)) {
          this.error(`${file.fileName} still loads a script or stylesheet from a file: the page must be self-contained`);
        }
        const meta = `<meta http-equiv="Content-Security-Policy" content="${policyFor(scripts, styles)}">`;
        file.source = html.replace(/<head>/i, `<head>\n    ${meta}`);
      }
    } },
  };
}
