// The accuracy bench: every row of rows.ts on every severe-truncation case (cases.ts) with each
// kind of knowledge; inside- and outside-FOV RMSE against the case's truth (HU), the residual
// against the measured data, and the time. Beside them, FBP of the complete (untruncated) data:
// the floor that the grid, the view count and the truth image's sharp edges leave to any method.
// Robustness: the same on noisy, short-scan and off-centre variants, and with wrong knowledge.
import { compareImages } from '../../../core/compare';
import { dataResidual } from '../../../core/data-residual';
import type { Workspace } from '../../../core/engine/workspace';
import type { Knowledge } from '../../../core/knowledge';
import { validateRecipe } from '../../../core/recipe/recipe';
import { runRecipe } from '../../../core/recipe/run';
import { chooseGrid } from '../../../core/recipe/grid';
import { addPhotonNoise } from '../../../core/simulate/noise';
import { completeGeometry, demoCase, realSliceCase, thoraxCase, type CaseOptions, type SevereCase } from './cases';
import { ACCURACY_ROWS, knowledgeFor, WRONG_KNOWLEDGE, type AccuracyRow, type KnowledgeKind, type WrongKnowledge } from './rows';

export interface AccuracyFigure {
  case: string;
  variant: string;
  method: string;
  knowledge: KnowledgeKind | WrongKnowledge | 'complete data';
  insideHu: number;
  outsideHu: number;
  /** RMS of (A f - p) over the measured rays. */
  residual: number;
  seconds: number;
}

export interface CaseSummary {
  case: string;
  variant: string;
  about: string;
  fovRadiusMm: number;
  bodyHalfWidthMm: number;
  views: number;
  arcDeg: number;
}

type CaseMaker = (ws: Workspace, o: CaseOptions) => Promise<SevereCase>;

/** The cases; the demo scan keeps its own geometry (no short-scan variant). */
const CASES: Array<{ name: string; make: CaseMaker; ownGeometry?: boolean }> = [
  { name: 'nema-ct1-thorax', make: (ws, o) => realSliceCase(ws, 'nema-ct1-thorax.nrrd', o) },
  { name: 'pydicom-head', make: (ws, o) => realSliceCase(ws, 'pydicom-head.nrrd', o) },
  { name: 'thorax-phantom', make: (_ws, o) => thoraxCase(o) },
  { name: 'demo-scan', make: (_ws, o) => demoCase(o), ownGeometry: true },
];

/** A scan variant for robustness, and recipe fields every method uses on it. */
interface Variant {
  name: string;
  options: CaseOptions;
  recipe?: Record<string, unknown>;
}

/** Photon noise (with the Hann window a user would choose for it), a C-arm short scan, a field of view off the body's centre. */
export const VARIANTS: Variant[] = [
  { name: 'noise (2e5 photons, Hann window)', options: { photons: 2e5, seed: 7 }, recipe: { filter: 'hann' } },
  { name: 'short scan (200 degrees)', options: { arcDeg: 200 } },
  { name: 'off-centre field (body moved by 0.24, 0.15 of its half-width)', options: { shift: [0.24, 0.15] } },
];

async function measure(ws: Workspace, c: SevereCase, v: Variant, method: string, kind: AccuracyFigure['knowledge'], recipe: unknown): Promise<AccuracyFigure> {
  const t0 = performance.now();
  const r = await runRecipe(ws, c.scan, validateRecipe({ ...(recipe as object), ...v.recipe }));
  const seconds = (performance.now() - t0) / 1000;
  const cmp = compareImages(r.image, c.truth, c.fovRadius);
  const residual = await dataResidual(ws, r.image, c.scan);
  return { case: c.name, variant: v.name, method, knowledge: kind, insideHu: cmp.regions.insideFov!.rmse, outsideHu: cmp.regions.outsideFov?.rmse ?? NaN, residual: residual.rms, seconds };
}

/** FBP of the complete data (with the variant's noise) on the same grid as the truncated scan's default: the floor. */
async function floor(ws: Workspace, c: SevereCase, v: Variant): Promise<AccuracyFigure> {
  const grid = chooseGrid(c.scan);
  const geometry = completeGeometry(c, (grid.nx * grid.dx) / 2);
  const data = await c.project(geometry);
  if (v.options.photons) addPhotonNoise(data, v.options.photons, v.options.seed ?? 1);
  const full = { ...c.scan, geometry, data };
  const t0 = performance.now();
  const r = await runRecipe(ws, full, validateRecipe({ method: 'fbp', grid: { size: grid.nx, pixel: grid.dx }, ...v.recipe }));
  const cmp = compareImages(r.image, c.truth, c.fovRadius);
  return { case: c.name, variant: v.name, method: 'FBP of the complete data (floor)', knowledge: 'complete data', insideHu: cmp.regions.insideFov!.rmse, outsideHu: cmp.regions.outsideFov?.rmse ?? NaN, residual: NaN, seconds: (performance.now() - t0) / 1000 };
}

async function runRows(ws: Workspace, c: SevereCase, v: Variant, rows: AccuracyRow[], kinds: (row: AccuracyRow) => readonly (KnowledgeKind | WrongKnowledge)[], progress: (line: string) => void): Promise<AccuracyFigure[]> {
  const out: AccuracyFigure[] = [];
  for (const row of rows) {
    for (const kind of kinds(row)) {
      const k: Knowledge | undefined = knowledgeFor(c, kind);
      const f = await measure(ws, c, v, row.label, kind, row.recipe(k));
      progress(`${c.name} [${v.name}] ${row.label} (${kind}): ${f.insideHu.toFixed(1)} HU inside, ${f.seconds.toFixed(1)} s`);
      out.push(f);
    }
  }
  return out;
}

/** Runs the bench; `progress` receives one line per run. */
export async function benchAccuracy(ws: Workspace, progress: (line: string) => void = () => {}): Promise<{ cases: CaseSummary[]; figures: AccuracyFigure[] }> {
  const cases: CaseSummary[] = [];
  const figures: AccuracyFigure[] = [];
  const robust = ACCURACY_ROWS.filter((r) => r.robustness);
  for (const { make, ownGeometry } of CASES) {
    for (const v of [{ name: 'as built', options: {} } as Variant, ...VARIANTS]) {
      if (ownGeometry && v.options.arcDeg) continue;
      const c = await make(ws, v.options);
      const g = c.scan.geometry;
      const angles = g.anglesDeg && !Array.isArray(g.anglesDeg) ? g.anglesDeg : { step: 1, count: 360 };
      cases.push({ case: c.name, variant: v.name, about: c.about, fovRadiusMm: c.fovRadius, bodyHalfWidthMm: c.bodyHalfWidth, views: angles.count, arcDeg: angles.step * angles.count });
      figures.push(await floor(ws, c, v));
      if (v.name === 'as built') {
        figures.push(...await runRows(ws, c, v, ACCURACY_ROWS, (row) => row.kinds, progress));
        // Wrong knowledge: the rows that take knowledge, each with the wrong kinds that apply.
        figures.push(...await runRows(ws, c, { ...v, name: 'wrong knowledge' }, robust.filter((r) => r.kinds.some((k) => k !== 'none')), (row) =>
          WRONG_KNOWLEDGE.filter((w) => row.kinds.includes(w.startsWith('region') ? 'region' : 'outline')), progress));
      } else {
        figures.push(...await runRows(ws, c, v, robust, (row) => row.kinds, progress));
      }
    }
  }
  return { cases, figures };
}

const cell = (v: number, width: number, digits = 0) => (Number.isFinite(v) ? v.toFixed(digits) : '-').padStart(width);

/** The report's lines: one table per case and variant. */
export function accuracyLines(r: { cases: CaseSummary[]; figures: AccuracyFigure[] }): string[] {
  const lines = ['inside / outside: RMSE against the truth inside / outside the measured field of view (HU); residual: RMS of the re-projection minus the measured data'];
  for (const c of r.cases) {
    lines.push('', `${c.case} [${c.variant}]: ${c.about}; FOV radius ${c.fovRadiusMm.toFixed(0)} mm = ${(c.fovRadiusMm / c.bodyHalfWidthMm).toFixed(2)} of the half-width ${c.bodyHalfWidthMm.toFixed(0)} mm; ${c.views} views over ${c.arcDeg.toFixed(0)} degrees`);
    lines.push(`  ${'method'.padEnd(34)} ${'knowledge'.padEnd(15)} ${'inside'.padStart(7)} ${'outside'.padStart(8)} ${'residual'.padStart(9)} ${'time'.padStart(7)}`);
    const rows = r.figures.filter((f) => f.case === c.case && (f.variant === c.variant || (c.variant === 'as built' && f.variant === 'wrong knowledge')));
    for (const f of rows) {
      lines.push(`  ${f.method.padEnd(34)} ${f.knowledge.padEnd(15)} ${cell(f.insideHu, 7)} ${cell(f.outsideHu, 8)} ${cell(f.residual, 9, 3)} ${cell(f.seconds, 6, 1)}s`);
    }
  }
  return lines;
}
