// Runs the built CLI (build/cli.mjs via bin/rimfill.js) in a child process.
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const bin = fileURLToPath(new URL('../../bin/rimfill.js', import.meta.url));

export interface CliRun {
  code: number;
  stdout: string;
  stderr: string;
}

export function rimfill(args: string[], cwd?: string): CliRun {
  const r = spawnSync(process.execPath, [bin, ...args], { cwd, encoding: 'utf8', timeout: 120_000 });
  return { code: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}
