// What a DBP run tells the user: where the chords pass and why, the support, how each known
// region reads in the result against its given value, and which part of the image is not
// determined (with the reason), so that no pixel outside the determined part is mistaken for a
// measurement.
import type { Image2D } from '../image';
import type { PlacedKnowledge } from '../knowledge';
import { countUndetermined } from './undetermined-count';
import type { ChordFamily } from './chords';
import type { CoupledResult } from './coupled-solve';

/** Where the chords pass and where the object may lie, in words for the report. */
export interface DbpDecision {
  cx: number;
  cy: number;
  centre: string;
  supportFrom: string;
}

export interface ReportInput {
  decision: DbpDecision;
  family: ChordFamily;
  placed: PlacedKnowledge;
  image: Image2D;
  undetermined: Uint8Array;
  determined: Uint8Array;
  solved: CoupledResult;
  /** What the chords take outside the field of view. */
  exterior: string;
  truncatedViews: number;
  nViews: number;
  fov: number;
  timings: Record<string, number>;
}

const hu = (mu: number, muWater?: number) => (muWater ? Math.round((1000 * (mu - muWater)) / muWater) : undefined);

/** Mean of the image over a region's coverage. */
function regionMean(img: Image2D, coverage: Float32Array): number {
  let s = 0, w = 0;
  for (let q = 0; q < coverage.length; q++) { s += coverage[q] * img.data[q]; w += coverage[q]; }
  return s / w;
}

/** The report and the warnings of a DBP run. */
export function dbpReport(r: ReportInput): { report: Record<string, unknown>; warnings: string[] } {
  const g = r.image.grid, mw = r.image.muWater;
  const warnings: string[] = [];
  const { pixels: undetermined, insideFov: undeterminedInFov, fovPixels: inFov } = countUndetermined(r.undetermined, g, r.fov);
  const chordsUndetermined = r.family.count - r.determined.reduce((s, v) => s + v, 0);
  if (undeterminedInFov > 0) {
    warnings.push(`${((100 * undeterminedInFov) / inFov).toFixed(1)}% of the field of view is not determined: ${chordsUndetermined} of ${r.family.count} chords cross no known region; those pixels are set to 0 (air) and marked in the undetermined mask`);
  }
  if (undetermined > undeterminedInFov) {
    warnings.push(`outside the measured field of view (radius ${r.fov.toFixed(1)} mm) the image is not determined by DBP: ${undetermined - undeterminedInFov} pixels set to 0 (air) and marked in the undetermined mask`);
  }
  const regions = r.placed.regions.map((p) => ({
    name: p.name, givenHu: p.region.hu, resultHu: hu(regionMean(r.image, p.coverage), mw),
  }));
  return {
    warnings,
    report: {
      dbp: {
        chordsThrough: { x: Number(r.decision.cx.toFixed(2)), y: Number(r.decision.cy.toFixed(2)), what: r.decision.centre },
        chords: r.family.count,
        stepMm: Number(r.family.step.toFixed(3)),
        samples: r.family.chords.reduce((s, c) => s + c.at.length, 0),
        support: r.decision.supportFrom,
        exterior: r.exterior,
        truncatedViews: r.truncatedViews,
        views: r.nViews,
        knownRegions: regions,
        undetermined: {
          pixels: undetermined,
          insideFov: undeterminedInFov,
          chords: chordsUndetermined,
          fill: 'mu 0 (air, -1000 HU)',
          reason: 'DBP determines only points whose every line was measured (the field of view), and there only on chords that cross a known region (or whose object lies wholly inside the field of view)',
        },
        solver: { iterations: r.solved.iterations, relativeResiduals: r.solved.residuals.map((v) => Number(v.toExponential(2))) },
      },
      timings: r.timings,
    },
  };
}
