// What a bench section returns, and small timing helpers shared by the sections.

/** A section's figures (JSON for --json) and its lines for the text report. */
export interface SectionResult {
  json: unknown;
  lines: string[];
}

/** Seconds since an arbitrary origin. */
export const now = (): number => performance.now() / 1000;

/** Median of a non-empty list. */
export function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}
