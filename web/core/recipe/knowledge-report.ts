// What a reconstruction with knowledge reports (2D and cone beam): each known region's value
// with the base extension alone and with the knowledge, the residual of both against the
// measured data, how the tails were fitted, and warnings when a region could not be met or the
// residual grew a lot.
import type { ConeCompletionReport } from '../completion/cone-knowledge';
import type { CompletionReport } from '../completion/knowledge-extension';
import type { SuggestedOutline } from '../completion/suggested-outline';
import type { DataResidual } from '../data-residual';
import type { PlacedRegion } from '../knowledge';

/** Per known region: its value, what the base extension gives it and what the knowledge gives it, HU. */
export interface RegionReport {
  name: string;
  knownHu: number;
  beforeHu: number;
  afterHu: number;
}

export interface KnowledgeReport {
  /** What was used, in words ("known region 1 (circle at ...)", "outline (ellipse ...)"). */
  used: string[];
  regions: RegionReport[];
  /** ||A f - p|| over the measured rays with the base extension alone and with the knowledge. */
  residual: { before: ResidualFigures; after: ResidualFigures };
  /** How the tails were fitted (2D scans, or cone-beam rows). */
  completion: CompletionReport | ConeCompletionReport;
  /** The outline the data suggest (water cylinder reach), for the user to compare and correct (2D scans). */
  suggestedOutline: SuggestedOutline | null;
}

type ResidualFigures = Pick<DataResidual, 'rms' | 'relative' | 'bias'>;

const hu = (mu: number, muWater: number) => (1000 * (mu - muWater)) / muWater;

export function residualFigures(r: DataResidual): ResidualFigures {
  return { rms: r.rms, relative: r.relative, bias: r.bias };
}

/** Each region's value in the image (or volume) made without and with the knowledge, HU. */
export function regionReports(regions: PlacedRegion[], before: Float32Array, after: Float32Array, muWater: number): RegionReport[] {
  return regions.map((r) => ({
    name: r.name, knownHu: r.region.hu,
    beforeHu: hu(weightedMean(before, r.coverage), muWater), afterHu: hu(weightedMean(after, r.coverage), muWater),
  }));
}

function weightedMean(data: Float32Array, coverage: Float32Array): number {
  let s = 0, w = 0;
  for (let q = 0; q < coverage.length; q++) {
    if (coverage[q] > 0) { s += coverage[q] * data[q]; w += coverage[q]; }
  }
  return w > 0 ? s / w : NaN;
}

/** Warnings when a region misses its value or the residual grew a lot (shared with 2D). */
export function knowledgeWarnings(k: KnowledgeReport): string[] {
  const out: string[] = [];
  for (const r of k.regions) {
    if (Math.abs(r.afterHu - r.knownHu) > 10) out.push(`${r.name} reads ${r.afterHu.toFixed(0)} HU after the correction, not ${r.knownHu} HU: the tails could not reach it (check the region and its value)`);
  }
  if (k.residual.after.rms > 1.25 * k.residual.before.rms) {
    out.push(`the residual against the measured data grew from ${k.residual.before.rms.toPrecision(3)} to ${k.residual.after.rms.toPrecision(3)}: the image outside the field of view agrees less with the data (check the known values and the outline)`);
  }
  return out;
}
