// Peak resident memory of the bench process, and the machine's load beside each figure (the
// machines the bench runs on are shared: a figure means little without the load it was taken at).
import { readFileSync } from 'node:fs';
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

/** Resident memory of this process now, MB (Linux /proc; elsewhere the heap and buffers Node reports). */
function rssMb(): number {
  try {
    const m = /VmRSS:\s*(\d+)\s*kB/.exec(readFileSync('/proc/self/status', 'utf8'));
    if (m) return Number(m[1]) / 1024;
  } catch {
    // not Linux: fall back below
  }
  return process.memoryUsage.rss() / 2 ** 20;
}

/**
 * Samples this process's resident memory every `ms` until the returned function is called, which
 * gives the largest sample, MB: the peak of one run within a longer process, whose high-water
 * mark (peakRssMb) is left alone.
 */
export function trackPeakRss(ms = 200): () => number {
  let peak = rssMb();
  const timer = setInterval(() => { peak = Math.max(peak, rssMb()); }, ms);
  return () => {
    clearInterval(timer);
    return Math.max(peak, rssMb());
  };
}

/** The 1-minute load average and the core count, e.g. "load 7.2 on 2 cores". */
export function loadText(): string {
  return `load ${loadavg()[0].toFixed(1)} on ${availableParallelism()} cores`;
}
