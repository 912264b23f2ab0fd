// The best FBP correction for what the user knows (best-fbp.ts), validated: the default start
// and default prior of the other methods, and the accuracy bench's row.
import type { Knowledge } from '../knowledge';
import { fbpFieldsForKnowledge, type FbpChoices } from './best-fbp';
import { validateRecipe, type Recipe } from './recipe';

export type { FbpChoices } from './best-fbp';

/** The FBP recipe for `knowledge` (validated; throws InputError for malformed knowledge). */
export function fbpRecipeForKnowledge(knowledge?: Knowledge, choices: FbpChoices = {}): Recipe {
  return validateRecipe(fbpFieldsForKnowledge(knowledge, choices));
}
