// The knowledge a stored result used, as the page and the HTML report show it: the items in
// words, each known region's value before and after the correction, and the residual against
// the measured data before and after (the run's report, core/recipe/knowledge-report.ts; the
// iterative methods report the same fields). A result whose run reported nothing of its
// knowledge still names it from its recipe.
import { describeOutline, describeRegion, type Knowledge } from '../../core/knowledge';
import type { RegionReport } from '../../core/recipe/knowledge-report';

export interface ResultKnowledge {
  used: string[];
  regions: RegionReport[];
  residual?: { before: { rms: number; relative: number }; after: { rms: number; relative: number } };
}

function isRegionReport(v: unknown): v is RegionReport {
  const r = v as RegionReport;
  return typeof r?.name === 'string' && typeof r.knownHu === 'number';
}

/** What a result knew beyond the data (undefined: nothing). */
export function resultKnowledge(result: { recipe: Record<string, unknown>; report: Record<string, unknown> }): ResultKnowledge | undefined {
  const k = result.recipe.knowledge as Knowledge | undefined;
  if (!k?.known?.length && !k?.outline) return undefined;
  const fromRecipe = [...(k.known ?? []).map((r, i) => describeRegion(r, i)), ...(k.outline ? [describeOutline(k.outline)] : [])];
  const rep = result.report.knowledge as Partial<{ used: unknown; regions: unknown; residual: ResultKnowledge['residual'] }> | undefined;
  const used = Array.isArray(rep?.used) && rep.used.every((u) => typeof u === 'string') ? (rep.used as string[]) : fromRecipe;
  const regions = Array.isArray(rep?.regions) ? rep.regions.filter(isRegionReport) : [];
  const residual = rep?.residual && typeof rep.residual.before?.rms === 'number' && typeof rep.residual.after?.rms === 'number' ? rep.residual : undefined;
  return { used, regions, ...(residual ? { residual } : {}) };
}
