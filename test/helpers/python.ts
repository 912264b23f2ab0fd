// Reference files written by an independent, general-purpose writer: Debian's Python 3 with
// numpy, pydicom, tifffile, Pillow and scikit-image (apt packages python3-numpy, python3-pydicom,
// python3-tifffile, python3-pil, python3-skimage). Only the reference tier (*.ref.test.ts) uses it.
// Tests fail (never skip) when a module is missing, naming the package to install.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const PYTHON = process.env.RIMFILL_PYTHON ?? '/usr/bin/python3';

const PACKAGES: Record<string, string> = { numpy: 'python3-numpy', pydicom: 'python3-pydicom', tifffile: 'python3-tifffile', PIL: 'python3-pil', skimage: 'python3-skimage' };

/** Checks that the reference Python (/usr/bin/python3, or RIMFILL_PYTHON) can import the modules, throwing a message naming the apt packages. */
export function requirePython(modules: string[]): void {
  try {
    execFileSync(PYTHON, ['-c', modules.map((m) => `import ${m}`).join('; ')], { stdio: 'pipe' });
  } catch (err) {
    const pkgs = modules.map((m) => PACKAGES[m] ?? m).join(' ');
    throw new Error(`${PYTHON} cannot import ${modules.join(', ')}: install them with apt-get install ${pkgs} (${(err as Error).message.split('\n')[0]})`);
  }
}

/**
 * Runs a Python script in a fresh temporary folder (its working directory) and returns the
 * files it wrote there, by name, plus its stdout. The folder is removed afterwards.
 */
export function runPython(script: string, modules: string[], input?: Record<string, Uint8Array>): { files: Record<string, Uint8Array>; stdout: string } {
  requirePython(modules);
  const dir = mkdtempSync(join(tmpdir(), 'rimfill-py-'));
  try {
    if (input) for (const [name, bytes] of Object.entries(input)) writeFileSync(join(dir, name), bytes);
    const stdout = execFileSync(PYTHON, ['-c', script], { cwd: dir, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
    const files: Record<string, Uint8Array> = {};
    for (const name of readdirSync(dir)) files[name] = new Uint8Array(readFileSync(join(dir, name)));
    return { files, stdout };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
