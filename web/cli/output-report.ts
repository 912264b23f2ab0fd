// What a command is about to write and what it wrote: a warning before a large write (with the
// option that makes it smaller), and one line per file written, with its size.
import { formatSize } from '../core/sizes';
import type { WrittenFile } from './io';

/** Planned output above this many bytes in total gets a warning before the work starts. */
export const LARGE_OUTPUT_BYTES = 200e6;

/** A file a command plans to write. */
export interface PlannedFile {
  path: string;
  /** Estimated size (the data; headers are small). */
  bytes: number;
  /** How to make it smaller, in the command's options. */
  smaller: string;
}

/** The warning for planned files larger than `limit` bytes in total, or undefined. */
export function largeOutputWarning(files: PlannedFile[], limit = LARGE_OUTPUT_BYTES): string | undefined {
  const total = files.reduce((n, f) => n + f.bytes, 0);
  if (total <= limit) return undefined;
  const big = [...files].sort((a, b) => b.bytes - a.bytes).filter((f) => f.bytes > 0.1 * total);
  return `about to write ${formatSize(total)} (more than ${formatSize(limit)}): ` +
    big.map((f) => `${f.path} ${formatSize(f.bytes)} (smaller: ${f.smaller})`).join('; ');
}

/** "wrote scan.nrrd (1.2 MB): what it holds", one line per file, in the order written. */
export function writtenLines(written: WrittenFile[], what: Record<string, string>): string[] {
  return written.map((w) => `wrote ${w.path} (${formatSize(w.bytes)})${what[w.path] ? `: ${what[w.path]}` : ''}`);
}

/** A warning sink that prints at once on stderr (before a long computation, not after it). */
export function stderrWarning(command: string): (text: string) => void {
  return (text) => process.stderr.write(`rimfill ${command}: warning: ${text}\n`);
}
