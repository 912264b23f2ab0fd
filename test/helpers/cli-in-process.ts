// Runs the CLI's main() in the test's own process (no child process, no bundle to load): the same
// commands, exit codes, stdout and stderr as bin/rimfill.js, paths taken relative to `cwd`.
import { vi } from 'vitest';
import { main } from '../../web/cli/main';
import type { CliRun } from './cli';

export async function rimfillHere(args: string[], cwd?: string): Promise<CliRun> {
  let stdout = '', stderr = '';
  const so = vi.spyOn(process.stdout, 'write').mockImplementation((s) => {
    stdout += String(s);
    return true;
  });
  const se = vi.spyOn(process.stderr, 'write').mockImplementation((s) => {
    stderr += String(s);
    return true;
  });
  const before = process.cwd();
  try {
    if (cwd) process.chdir(cwd);
    return { code: await main(args), stdout, stderr };
  } finally {
    process.chdir(before);
    so.mockRestore();
    se.mockRestore();
  }
}
