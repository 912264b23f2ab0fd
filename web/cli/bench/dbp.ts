// Bench section "dbp": accuracy inside the measured field of view and cost of differentiated
// backprojection on the severe-truncation cases (accuracy/cases.ts: two real CT slices and the
// thorax phantom, C-arm-like fan geometry, FOV radius 0.42 of the body half-width), next to FBP
// with water extension and OS-SART on the same scans and grid. DBP runs with the case's known
// 20 mm disk, without and with the case's outline ellipse. The project's goal for DBP with a
// known region: within 10% of the known-region FBP figure or better, and at most 40 HU inside the
// field of view.
import { compareImages } from '../../core/compare';
import type { Workspace } from '../../core/engine/workspace';
import type { Knowledge } from '../../core/knowledge';
import { validateRecipe } from '../../core/recipe/recipe';
import { runRecipe } from '../../core/recipe/run';
import { openWorkspace } from '../engine-node';
import { realSliceCase, thoraxCase, type SevereCase } from './accuracy/cases';

export interface DbpBenchRow {
  case: string;
  method: string;
  /** RMSE inside the measured field of view (object pixels), HU. */
  insideFovHu: number;
  seconds: number;
}

/** The methods compared on every case: label and recipe fields (knowledge from the case). */
function methods(c: SevereCase): Array<[string, Record<string, unknown>]> {
  const known: Knowledge = { known: [c.known] };
  return [
    ['FBP + water extension', { method: 'fbp', extend: 'water' }],
    ['OS-SART (defaults)', { method: 'sart' }],
    ['DBP + known disk', { method: 'dbp', knowledge: known }],
    ['DBP + known disk + outline', { method: 'dbp', knowledge: { ...known, outline: c.outline } }],
  ];
}

async function rowsFor(ws: Workspace, c: SevereCase, progress: (line: string) => void): Promise<DbpBenchRow[]> {
  const grid = { size: c.truth.grid.nx, pixel: c.truth.grid.dx };
  const rows: DbpBenchRow[] = [];
  for (const [label, fields] of methods(c)) {
    const t0 = performance.now();
    const r = await runRecipe(ws, c.scan, validateRecipe({ ...fields, grid }));
    const seconds = (performance.now() - t0) / 1000;
    const insideFovHu = compareImages(r.image, c.truth, c.fovRadius).regions.insideFov!.rmse;
    rows.push({ case: c.name, method: label, insideFovHu, seconds });
    progress(`${c.name}: ${label} ${insideFovHu.toFixed(1)} HU in ${seconds.toFixed(1)} s`);
  }
  return rows;
}

/** Runs every case with every method on `workers` workers. */
export async function benchDbp(workers: number, progress: (line: string) => void = () => {}): Promise<{ workers: number; rows: DbpBenchRow[]; cases: string[] }> {
  const ws = await openWorkspace(workers);
  try {
    const cases = [await realSliceCase(ws, 'nema-ct1-thorax.nrrd'), await thoraxCase(), await realSliceCase(ws, 'pydicom-head.nrrd')];
    const rows: DbpBenchRow[] = [];
    for (const c of cases) rows.push(...(await rowsFor(ws, c, progress)));
    return { workers, rows, cases: cases.map((c) => `${c.name}: ${c.about}, FOV radius ${c.fovRadius.toFixed(1)} mm, known disk ${c.known.hu} HU`) };
  } finally {
    ws.dispose();
  }
}

/** The text report: one line per case and method. */
export function dbpBenchLines(b: Awaited<ReturnType<typeof benchDbp>>): string[] {
  const lines = [`inside-FOV RMSE and time, ${b.workers} worker(s):`, ...b.cases.map((c) => `  ${c}`)];
  for (const r of b.rows) lines.push(`  ${r.case.padEnd(18)} ${r.method.padEnd(28)} ${r.insideFovHu.toFixed(1).padStart(7)} HU ${r.seconds.toFixed(1).padStart(7)} s`);
  return lines;
}
