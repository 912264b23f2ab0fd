// Convergence histories in a result's report: `report.convergence` is an object of named
// per-iteration series (numbers, or typed arrays), e.g. { residual: [...], tv: [...] }.
// Iterative methods fill it; the results view plots each series against the iteration.

export interface History {
  label: string;
  values: number[];
}

/** The series of report.convergence with at least two finite-or-NaN numbers, in key order. */
export function convergenceHistories(report: Record<string, unknown>): History[] {
  const c = report.convergence;
  if (typeof c !== 'object' || c === null || Array.isArray(c)) return [];
  const out: History[] = [];
  for (const [label, v] of Object.entries(c as Record<string, unknown>)) {
    const list = Array.isArray(v) ? v : ArrayBuffer.isView(v) && !(v instanceof DataView) ? Array.from(v as unknown as ArrayLike<number>) : undefined;
    if (!list || list.length < 2 || !list.every((x) => typeof x === 'number')) continue;
    out.push({ label, values: list as number[] });
  }
  return out;
}
