// Splitting index ranges into parts for the workers.

/** Splits [0, n) into `parts` contiguous ranges of near-equal size; boundaries are multiples of `align`. */
export function splitRange(n: number, parts: number, align = 1): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  let start = 0;
  for (let p = 0; p < parts; p++) {
    let end = p === parts - 1 ? n : Math.round(((p + 1) * n) / parts / align) * align;
    end = Math.min(n, Math.max(start, end));
    if (end > start) out.push([start, end]);
    start = end;
  }
  return out;
}
