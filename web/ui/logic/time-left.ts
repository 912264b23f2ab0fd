// Time left of a running job from its progress: elapsed x (1 - f) / f, once enough is done for
// the rate to mean something (common practice for progress bars).

/** Milliseconds left, or undefined while too little is done to tell. */
export function remainingMs(fraction: number, elapsedMs: number): number | undefined {
  if (!(fraction >= 0.03) || elapsedMs < 700) return undefined;
  if (fraction >= 1) return 0;
  return (elapsedMs * (1 - fraction)) / fraction;
}

/** "about 45 s", "about 2 min 10 s", "under a second". */
export function formatDuration(ms: number): string {
  if (ms < 1000) return 'under a second';
  const s = Math.round(ms / 1000);
  if (s < 60) return `about ${s} s`;
  const m = Math.floor(s / 60);
  const r = Math.round((s - m * 60) / 10) * 10;
  return r ? `about ${m} min ${r} s` : `about ${m} min`;
}
