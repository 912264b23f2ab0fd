// The best FBP correction for what the user knows, as plain recipe fields (README "Choosing a
// method", measured by the accuracy bench). Without imports beyond types, so that the iterative
// options (which recipe.ts validates) can name it as their default prior; knowledge-recipe.ts
// gives the validated recipe.
//   nothing known         FBP with water cylinder extension (Hsieh et al. 2004);
//   known regions         the same tails, every view's mass fitted so the regions read their
//                         values (with three or more regions, also the centroid);
//   outline only          the tails carry the mass of the outline filled with water outside the
//                         measured field (extend 'outline');
//   regions and outline   the regions decide; the outline is checked and reported.
import type { Knowledge } from '../knowledge/types';
import type { Recipe } from './recipe';

/** Fields of the FBP recipe the caller may set (grid, filter, band limit). */
export type FbpChoices = Partial<Pick<Recipe, 'grid' | 'filter' | 'bandLimit'>>;

/** The FBP recipe's fields (plain JSON, not yet validated) for `knowledge`. */
export function fbpFieldsForKnowledge(knowledge?: Knowledge, choices: FbpChoices = {}): Record<string, unknown> {
  const hasRegions = !!knowledge?.known?.length;
  const extend = !hasRegions && knowledge?.outline ? 'outline' : 'water';
  return { ...choices, method: 'fbp', extend, ...(hasRegions || knowledge?.outline ? { knowledge } : {}) };
}
