// What the chords need outside the field of view. No ray measures the object there, yet it
// decides the smooth drift that the finite Hilbert inversion leaves inside (the interior problem
// is stable near the known region and less so far from it: Courdurier, Noo, Defrise & Kudo 2008,
// REFERENCES.md [courdurier2008]). Kept only smooth, the exterior drifts freely and so does the
// far side of the field of view. Without an outline, the best estimate of it for the knowledge
// given is FBP fitted to the known regions (every view's water-cylinder tail scaled so that the
// regions read their values, recipe/best-fbp.ts): the chords are drawn weakly toward that image
// outside the field of view. Inside it the data and the known regions alone decide. Given an
// outline, the chords are bounded by it instead (chord-support.ts) and no estimate is used.
import type { Workspace } from '../engine/workspace';
import type { ImageGrid } from '../image';
import type { Knowledge, MaskInputs } from '../knowledge';
import { fbpRecipeForKnowledge } from '../recipe/knowledge-recipe';
import { runKnowledgeFbp } from '../recipe/run-knowledge';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';
import { atPoint } from './chord-knowledge';

/**
 * Weight of the pull per mm of chord, against one Hilbert sample (the chord equations' unit).
 * One value for every scan, chosen on the accuracy bench's four cases together (NEMA thorax,
 * head, thorax phantom, demo; inside-field RMSE with the known disk, HU): without the pull 64 /
 * 28 / 59 / 85; 1e-4: 48 / 20 / 37 / 49; 1e-3: 48 / 33 / 38 / 46; 1e-2: 54 / 57 / 45 / 53
 * (the FBP tails' own error comes through); 3e-5: 51 / 14 / 41 / 60 (the drift returns).
 */
export const EXTERIOR_PULL = 1e-4;

export interface ExteriorEstimate {
  /** Value (mu, 1/mm) at a point, nearest pixel; 0 off the grid. */
  at(x: number, y: number): number;
  /** What it is, for the report. */
  from: string;
  weight: number;
}

/** FBP fitted to the known regions on `grid`, as the chords' exterior estimate. */
export async function exteriorFromKnownRegions(ws: Workspace, scan: Scan, knowledge: Knowledge, grid: ImageGrid, masks: MaskInputs | undefined, hooks: RunHooks): Promise<ExteriorEstimate> {
  const recipe = fbpRecipeForKnowledge({ known: knowledge.known }, { grid: { size: grid.nx, pixel: grid.dx } });
  const r = await runKnowledgeFbp(ws, scan, recipe, { signal: hooks.signal }, { masks });
  ws.reset();
  const data = r.image.data;
  return { at: (x, y) => atPoint(data, grid, x, y), from: 'FBP fitted to the known regions (water-cylinder tails scaled so that the regions read their values)', weight: EXTERIOR_PULL };
}
