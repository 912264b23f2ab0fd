// What made a result, in words, for files that leave Rimfill (DICOM series description and
// derivation, NRRD rimfill.description): the recipe label, and the knowledge it used.
import { describeOutline, describeRegion, knowledgePhrase, type Knowledge } from '../knowledge';
import { recipeLabel } from './label';

export interface ResultWords {
  /** The recipe label, with the knowledge in short ("..., 1 known region + outline"). */
  label: string;
  /** The label with every known region and the outline spelt out. */
  detail: string;
}

/** The words for a recipe as run. */
export function describeResult(recipe: Record<string, unknown>): ResultWords {
  const summary = recipeLabel(recipe);
  const k = recipe.knowledge as Knowledge | undefined;
  const phrase = knowledgePhrase(k);
  // The label may already name the knowledge (when its field is described for forms).
  const label = phrase && !summary.includes(phrase) ? `${summary}, ${phrase}` : summary;
  const items = [...(k?.known ?? []).map((r, i) => describeRegion(r, i)), ...(k?.outline ? [describeOutline(k.outline)] : [])];
  return { label, detail: items.length ? `${label}; knowledge: ${items.join('; ')}` : label };
}
