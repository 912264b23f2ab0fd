// The best FBP correction for what the user knows (README "Choosing a method", measured by the
// accuracy bench): the default start and default prior of the other methods.
//   nothing known         FBP with water cylinder extension (Hsieh et al. 2004);
//   known regions         the same tails, every view's mass fitted so the regions read their
//                         values (with three or more regions, also the centroid);
//   outline only          the tails carry the mass of the outline filled with water outside the
//                         measured field (extend 'outline');
//   regions and outline   the regions decide; the outline is checked and reported.
import type { Knowledge } from '../knowledge';
import { validateRecipe, type Recipe } from './recipe';

/** Fields of the FBP recipe the caller may set (grid, filter, band limit). */
export type FbpChoices = Partial<Pick<Recipe, 'grid' | 'filter' | 'bandLimit'>>;

/** The FBP recipe for `knowledge` (validated; throws InputError for malformed knowledge). */
export function fbpRecipeForKnowledge(knowledge?: Knowledge, choices: FbpChoices = {}): Recipe {
  const hasRegions = !!knowledge?.known?.length;
  const extend = !hasRegions && knowledge?.outline ? 'outline' : 'water';
  return validateRecipe({ ...choices, method: 'fbp', extend, ...(hasRegions || knowledge?.outline ? { knowledge } : {}) });
}
