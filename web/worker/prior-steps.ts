// Steps every prior check of the page shares, whatever the prior came from (a network, a stored
// result, an image file): the prior's consistency report and disagreement map against the
// measured data, the prior-guided data-consistent step with its own report, and the comparison
// with the scan's reference, and the records of a checked image. The jobs (network-prior-job.ts,
// prior-check-job.ts) decide what is stored and write it; nothing here writes to storage.
import { compareImages, type Comparison } from '../core/compare';
import { consistencyReport, type ConsistencyReport } from '../core/consistency/consistency-report';
import { dataConsistentFromPrior } from '../core/consistency/data-consistent';
import { disagreementMap } from '../core/consistency/disagreement-map';
import type { Workspace } from '../core/engine/workspace';
import { InputError } from '../core/errors';
import type { Image2D, ImageGrid } from '../core/image';
import { validateRecipe, type GridChoice } from '../core/recipe/recipe';
import type { RunHooks } from '../core/run-hooks';
import type { Scan } from '../core/scan';
import { dataResidualOf } from '../core/consistency/residual-figures';
import { storedConsistency } from '../store/consistency';
import type { NewResult } from '../store/results';
import { resultRecords } from '../store/results';

/** Runs `hooks` over the part [a, b] of the progress bar. */
export const stage = (hooks: RunHooks, a: number, b: number): RunHooks => ({
  signal: hooks.signal,
  onProgress: (f, name) => hooks.onProgress?.(a + (b - a) * f, name),
});

/** Checks the parts of a request every prior check shares (they cross from the page). */
export function checkDataConsistentRequest(r: { grid?: GridChoice; iterations?: number }, what: string): void {
  if (r.grid !== undefined) validateRecipe({ method: 'fbp', grid: r.grid });
  if (r.iterations !== undefined && !(Number.isInteger(r.iterations) && r.iterations >= 1 && r.iterations <= 10000)) {
    throw new InputError(`${what} iterations: got ${r.iterations}, expected a whole number from 1 to 10000`);
  }
}

/** Refuses scans the 2D consistency report cannot check (cone beam, several rows). */
export function require2dScan(scan: Scan, scanName: string, what: string): void {
  const g = scan.geometry;
  if (g.kind === 'cone' || g.detector.rows !== 1) {
    throw new InputError(`${what}: scan "${scanName}" has ${g.detector.rows} detector rows (${g.kind} beam); the ${what} works on 2D scans`);
  }
}

/** The image against the scan's reference, or null (with the reason in `warnings`). */
export function compared(image: Image2D, reference: Image2D | undefined, warnings: string[], undetermined?: Uint8Array): Comparison | null {
  if (!reference) return null;
  try {
    return compareImages(image, reference, image.fovRadius, undetermined);
  } catch (err) {
    if (!(err instanceof InputError)) throw err;
    warnings.push(`no comparison with the reference: ${err.message}`);
    return null;
  }
}

/** Adds a warning when the image holds NaN or infinities. */
export function nonFiniteWarning(image: Image2D, warnings: string[]): void {
  let bad = 0;
  for (const v of image.data) if (!Number.isFinite(v)) bad++;
  if (bad) warnings.push(`${bad} pixels are not finite numbers (NaN or infinity): the image is not trustworthy`);
}

/** An image checked against the measured data. */
export interface CheckedImage {
  report: ConsistencyReport;
  /** Share of flagged rays through each pixel (undefined when no ray was flagged). */
  map?: Float32Array;
  /** The report's warnings and a note on non-finite pixels. */
  warnings: string[];
}

/** Re-projects `image` (on its own grid) against the measured data: report, map and warnings. */
export async function checkImage(ws: Workspace, scan: Scan, image: Image2D, hooks: RunHooks): Promise<CheckedImage> {
  const report = await consistencyReport(ws, scan, image, stage(hooks, 0, 0.65));
  const map = report.summary.flaggedRays === 0 ? undefined : await disagreementMap(ws, scan, image.grid, report.profiles.flagged, stage(hooks, 0.65, 1));
  const warnings = [...report.warnings];
  nonFiniteWarning(image, warnings);
  return { report, map, warnings };
}

/** The data-consistent result made from a prior, checked like the prior. */
export interface ConsistentSide extends CheckedImage {
  image: Image2D;
  /** The prior-guided method's report (convergence, departure from the prior). */
  recipeReport: Record<string, unknown>;
  seconds: number;
}

/** The prior-guided data-consistent step from `prior` on `grid`, then its own check. */
export async function consistentFromPrior(ws: Workspace, scan: Scan, prior: Image2D, grid: ImageGrid, iterations: number | undefined, hooks: RunHooks): Promise<ConsistentSide> {
  const t0 = performance.now();
  const r = await dataConsistentFromPrior(ws, scan, prior, { grid, iterations }, stage(hooks, 0, 0.85));
  const checked = await checkImage(ws, scan, r.image, stage(hooks, 0.85, 1));
  return { ...checked, image: r.image, recipeReport: r.report, warnings: [...r.warnings, ...checked.warnings], seconds: (performance.now() - t0) / 1000 };
}

/** The records of a checked image as a new result: its report, residual figures and map kept with it. */
export function checkedResultRecords(input: Omit<NewResult, 'residual' | 'consistency'>, image: Image2D, checked: CheckedImage) {
  const stored = storedConsistency(checked.report, image.grid, checked.map);
  return resultRecords({ ...input, residual: dataResidualOf(checked.report), consistency: stored.meta }, image, { consistency: stored.arrays });
}

/**
 * The records of a data-consistent result made from a checked prior (stored as result
 * `priorId`): recipe method "prior" whose `prior.resultId` links it to that result.
 */
export function consistentResultRecords(
  dc: ConsistentSide,
  o: { scanId: string; priorName: string; priorSource: Record<string, unknown>; priorId: string; grid: ImageGrid; iterations?: number; reference?: Image2D },
) {
  return checkedResultRecords({
    scanId: o.scanId,
    name: `Data-consistent, prior from ${o.priorName}`,
    recipe: { method: 'prior', prior: { ...o.priorSource, resultId: o.priorId }, grid: { size: o.grid.nx, pixel: o.grid.dx }, ...(o.iterations ? { iterations: o.iterations } : {}) },
    warnings: dc.warnings,
    report: { ...dc.recipeReport, priorResultId: o.priorId },
    metrics: compared(dc.image, o.reference, dc.warnings),
    seconds: dc.seconds,
  }, dc.image, dc);
}
