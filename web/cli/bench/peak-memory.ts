// Peak resident memory of the bench process, and the machine's load beside each figure (the
// machines the bench runs on are shared: a figure means little without the load it was taken at).
import { readFileSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';

/**
 * Peak resident memory of this process, MB: VmHWM from /proc (reset by exec, unlike getrusage's
 * maxRSS, which a child inherits from the process that forked it), else maxRSS.
 */
export function peakRssMb(): number {
  try {
    const m = /VmHWM:\s*(\d+)\s*kB/.exec(readFileSync('/proc/self/status', 'utf8'));
    if (m) return Number(m[1]) / 1024;
  } catch {
    // not Linux: fall back below
  }
  return process.resourceUsage().maxRSS / 1024;
}

/**
 * Starts a new peak (Linux: writing 5 to /proc/self/clear_refs resets VmHWM to the present
 * resident memory). Returns false where that is not possible: peaks then include what came before.
 */
export function resetPeakRss(): boolean {
  try {
    writeFileSync('/proc/self/clear_refs', '5');
    return true;
  } catch {
    return false;
  }
}

/** The 1-minute load average and the core count, e.g. "load 7.2 on 2 cores". */
export function loadText(): string {
  return `load ${loadavg()[0].toFixed(1)} on ${availableParallelism()} cores`;
}
