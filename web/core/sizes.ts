// Sizes of files and stored data, for people.

/** Human-readable size: 1.5 MB, 320 kB (powers of 1000, as browsers report quota and file managers show files). */
export function formatSize(n: number): string {
  if (!Number.isFinite(n)) return 'unknown';
  if (n < 1000) return `${n} B`;
  const units = ['kB', 'MB', 'GB', 'TB'];
  let v = n / 1000, u = 0;
  while (v >= 1000 && u < units.length - 1) {
    v /= 1000;
    u++;
  }
  return `${v < 10 ? v.toFixed(1) : Math.round(v)} ${units[u]}`;
}
