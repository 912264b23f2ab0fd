// Detector extension from what the user knows (REFERENCES.md [kudo2008], [helgason-ludwig],
// [kolditz2011]; mass and centroid from consistency as in [prince1993], a few smooth parameters
// fixed by a known subregion as in [paleo2017]). Tails of a base extension (water cylinders by default, joined to each edge's
// value and slope) are stretched view by view so that every completed parallel view carries the
// same mass, the zeroth Helgason-Ludwig condition. With no complete view the mass itself is
// unknown; inside the field of view it decides the smooth offset that truncated data cannot tell
// apart (the interior problem). The knowledge chooses it:
//   - known regions: the mass (one or two regions) or the mass and the centroid (three or more;
//     the centroid then shares each view's missing mass between its two tails through the
//     first-order condition) that make the regions read their values (fit-moments.ts);
//   - an outline alone: the mass of an object whose part outside each measured strip is the
//     outline filled with water-equivalent material (outline-moments.ts; the upper end of the
//     views' estimates, since an outline that leaves something out is short in most views).
// Without a centroid each view keeps its base tails' sharing between left and right. The tails
// are designed in the parallel domain (parallel-domain.ts) and sampled back onto the scan's
// extended detector as a table (fan-tails.ts), so FBP itself is unchanged.
import type { Workspace } from '../engine/workspace';
import { InputError, throwIfCancelled } from '../errors';
import type { ImageGrid } from '../image';
import type { MaskInputs, Outline, PlacedRegion } from '../knowledge';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import type { ExtendMethod } from '../truncation/extend-methods';
import type { DetectorExtension, ExtensionSummary } from '../truncation/extension-plan';
import { rayCoordinates } from '../truncation/ray-coords';
import { baseTails, tailReach, type DomainTails } from './domain-tails';
import { channelsForTails, tableExtension } from './fan-tails';
import { CENTROID_REGIONS, fitMomentsToRegions } from './fit-moments';
import { hlDeparture, measuredMoments, objectMomentsFrom, type MeasuredMoments, type ObjectMoments } from './moments';
import { outlineBeyondStrip, outlineMoments, outlineRaster, outlineSpread } from './outline-moments';
import { rebinToParallelDomain, type ParallelDomain } from './parallel-domain';
import { regionValues, regionWindow, type FbpSettings } from './region-values';
import { completedMoments, stretchToMass, stretchToMoments } from './stretch';

export interface CompletionReport {
  /** The base extension whose tails were stretched. */
  base: ExtensionSummary;
  /** Where the mass and centroid came from. */
  momentsFrom: 'known regions' | 'outline' | 'base tails';
  /** Mass (line integral x mm) and centroid (mm) before fitting, and those used. */
  prior: ObjectMoments;
  moments: ObjectMoments;
  fit?: { fitted: 'mass' | 'mass and centroid'; iterations: number };
  /**
   * With an outline: (max - min) / median of the mass each view implies if the outline held
   * water outside its strip. Near 0 when the outline and water agree with the data; large when
   * the outline leaves material out or the object is far from water (lungs, a skull).
   */
  outlineSpread?: number;
  /** Relative RMS departure from the Helgason-Ludwig conditions (order 0, 1) of the base tails and of the stretched tails. */
  consistency: { base: { order0: number; order1: number }; completed: { order0: number; order1: number } };
  stretch: { mean: number; min: number; max: number };
  channelsAdded: { left: number; right: number };
  parallelViews: number;
}

export interface KnowledgeExtensionInput {
  /** Base extension (not 'none'). */
  method: Exclude<ExtendMethod, 'none'>;
  regions: PlacedRegion[];
  outline?: Outline;
  masks?: MaskInputs;
  /** The reconstruction grid the regions were placed on. */
  grid: ImageGrid;
  fbp: FbpSettings;
  muWater: number;
}

/** Reach bound in s (mm), as the edge analysis bounds it (truncation/edges.ts reachBound). */
function reachBound(scan: Scan, pd: ParallelDomain): number {
  const rays = rayCoordinates(scan.geometry);
  return rays.form === 'parallel' ? 8 * pd.fov : 0.6 * rays.sourceIsocenter;
}

/** Stretch per tail that keeps it within the reach bound. */
function stretchCaps(t: DomainTails, pd: ParallelDomain, bound: number): Float64Array {
  const base = tailReach({ ...t, stretch: new Float64Array(t.stretch.length).fill(1) }, pd.ds);
  const room = Math.max(pd.ds, bound - pd.half * pd.ds);
  return base.map((r) => (r > 0 ? room / r : 0));
}

/** Median of the completed views' masses and the centroid of their first moments, with unstretched tails. */
function baseTailMoments(pd: ParallelDomain, t: DomainTails, m: MeasuredMoments): ObjectMoments {
  const c = completedMoments(pd, { ...t, stretch: new Float64Array(t.stretch.length).fill(1) }, m);
  const sorted = Array.from(c.m0).sort((a, b) => a - b);
  return objectMomentsFrom(pd.angles, c.m0, c.m1, sorted[sorted.length >> 1]);
}

function stretchStats(t: DomainTails): CompletionReport['stretch'] {
  let sum = 0, n = 0, min = Infinity, max = 0;
  for (let i = 0; i < t.stretch.length; i++) {
    if (!(t.area[i] > 0)) continue;
    sum += t.stretch[i]; n++;
    min = Math.min(min, t.stretch[i]); max = Math.max(max, t.stretch[i]);
  }
  return { mean: n ? sum / n : 1, min: n ? min : 1, max: n ? max : 1 };
}

/** Plans the knowledge-driven extension of a 2D scan and reports how it was chosen. */
export async function planKnowledgeExtension(ws: Workspace, scan: Scan, input: KnowledgeExtensionInput, hooks: RunHooks = {}): Promise<{ extension: DetectorExtension; report: CompletionReport }> {
  if (!input.regions.length && !input.outline) throw new InputError('knowledge in FBP: give a known region or an outline');
  const pd = rebinToParallelDomain(scan);
  const tails = await baseTails(ws, pd, input.method, input.muWater);
  throwIfCancelled(hooks.signal);
  const measured = measuredMoments(pd);
  const base = completedMoments(pd, tails, measured);
  const beyond = input.outline ? outlineBeyondStrip(pd, outlineRaster(input.outline, input.masks)) : undefined;
  const prior = beyond ? outlineMoments(pd, measured, beyond, input.muWater) : baseTailMoments(pd, tails, measured);
  const caps = stretchCaps(tails, pd, reachBound(scan, pd));
  // The centroid sets how a view's missing mass is shared between its tails; only three or more
  // regions determine it (fit-moments.ts). Otherwise each view keeps its base tails' sharing.
  const withCentroid = input.regions.length >= CENTROID_REGIONS;
  const extensionFor = (o: ObjectMoments): DetectorExtension => {
    if (withCentroid) stretchToMoments(pd, tails, measured, o, caps);
    else stretchToMass(pd, tails, measured, o.mass, caps);
    const { left, right } = channelsForTails(scan.geometry, pd, tails);
    return tableExtension(scan.geometry, pd, tails, left, right);
  };
  let moments = prior;
  let fit: CompletionReport['fit'];
  if (input.regions.length) {
    const windows = input.regions.map((r) => regionWindow(r, input.grid));
    let done = 0;
    const evaluate = async (o: ObjectMoments) => {
      throwIfCancelled(hooks.signal);
      const values = await regionValues(ws, scan, extensionFor(o), windows, input.fbp);
      hooks.onProgress?.(Math.min(0.9, 0.05 * ++done), 'fit to known regions');
      return values;
    };
    const f = await fitMomentsToRegions(evaluate, input.regions.map((r) => r.mu), prior, input.muWater, hooks.signal);
    moments = f.moments;
    fit = { fitted: f.fitted, iterations: f.iterations };
  }
  const extension = extensionFor(moments);
  const completed = completedMoments(pd, tails, measured);
  return {
    extension,
    report: {
      base: tails.summary,
      momentsFrom: input.regions.length ? 'known regions' : 'outline',
      prior, moments, ...(fit ? { fit } : {}),
      ...(beyond ? { outlineSpread: outlineSpread(measured, beyond, input.muWater) } : {}),
      consistency: { base: hlDeparture(pd.angles, base.m0, base.m1), completed: hlDeparture(pd.angles, completed.m0, completed.m1) },
      stretch: stretchStats(tails),
      channelsAdded: { left: extension.left, right: extension.right },
      parallelViews: pd.nViews,
    },
  };
}
