// A progress line on stderr for long CLI runs (only on a terminal).

/** A progress callback that redraws one stderr line, or undefined when stderr is not a TTY. */
export function progressLine(label: string): ((fraction: number, stage: string) => void) | undefined {
  if (!process.stderr.isTTY) return undefined;
  return (fraction, stage) => {
    process.stderr.write(`\r${label}: ${stage} ${(fraction * 100).toFixed(0).padStart(3)}%`);
    if (fraction >= 1) process.stderr.write('\r\x1b[K');
  };
}
