// The recipe that makes the network's input image from the scan (description input.from:
// method and detector extension), reconstructed directly on the model's input grid so that no
// extra interpolation separates it from what the network was trained on.
import { InputError } from '../errors';
import type { ImageGrid } from '../image';
import { validateRecipe, type Recipe } from '../recipe/recipe';
import type { ModelInfo } from './description';

/**
 * The validated recipe for the network input on `grid` (square, centred on the isocentre, as
 * recipe grids are). Throws InputError, phrased in terms of the model description, when this
 * build cannot run the method or extension the description asks for.
 */
export function networkInputRecipe(info: ModelInfo, grid?: ImageGrid): Recipe {
  const { method, extend } = info.input.from;
  const raw: Record<string, unknown> = { method };
  if (extend !== 'none') raw.extend = extend;
  if (grid) raw.grid = { size: grid.nx, pixel: grid.dx };
  let recipe: Recipe;
  try {
    recipe = validateRecipe(raw);
  } catch (err) {
    if (!(err instanceof InputError)) throw err;
    throw new InputError(`model description input.from: ${err.message.replace(/^recipe /, '')}`);
  }
  const kept = (recipe as unknown as Record<string, unknown>).extend;
  if (extend !== 'none' && kept !== extend) {
    throw new InputError(`model description input.from.extend: got "${extend}", but the recipes of this build have no detector extension; use "none" or a build with truncation extension`);
  }
  return recipe;
}
