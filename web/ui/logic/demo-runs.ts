// The demo of knowledge at work: the runs to queue once the demo scan holds a known region and
// the outline: FBP with water cylinder extension (unless one is stored already), FBP fitted to
// the known regions, and FBP extended from the outline (core/recipe/knowledge-recipe.ts), on
// the grid given (the ground truth's, so the comparison needs no resampling), with the Hann
// window: the demo scan carries photon noise, which the ramp filter would make most of the
// error left inside the field.
import type { GridChoice, Recipe } from '../../core/recipe/recipe';
import { fbpRecipeForKnowledge } from '../../core/recipe/knowledge-recipe';
import { recipeLabel } from '../../core/recipe/label';
import type { ResultMeta, ScanKnowledge } from '../../store/records';

export interface QueuedRecipe {
  recipe: Recipe;
  name: string;
}

const queued = (recipe: Recipe): QueuedRecipe => ({ recipe, name: recipeLabel(recipe as unknown as Record<string, unknown>) });

/** The demo's runs for the knowledge kept with the scan and the results it has. */
export function demoRuns(k: ScanKnowledge, results: ResultMeta[], grid?: GridChoice): QueuedRecipe[] {
  const choices = { filter: 'hann' as const, ...(grid ? { grid } : {}) };
  const out: QueuedRecipe[] = [];
  const sameGrid = (r: ResultMeta) => !grid || (r.grid.nx === grid.size && Math.abs(r.grid.dx - grid.pixel) < 1e-9);
  const hasWater = results.some((r) => r.recipe.method === 'fbp' && r.recipe.extend === 'water' && r.recipe.filter === 'hann' && !r.recipe.knowledge && !r.recipe.bandLimit && sameGrid(r));
  if (!hasWater) out.push(queued(fbpRecipeForKnowledge(undefined, choices)));
  if (k.regions.length) out.push(queued(fbpRecipeForKnowledge({ known: k.regions.map((r) => r.region) }, choices)));
  if (k.outline) out.push(queued(fbpRecipeForKnowledge({ outline: k.outline.outline }, choices)));
  return out;
}
