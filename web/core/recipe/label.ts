// A result's label, built in one place for the page (queue, lists, panels, metrics table), the
// report and the CLI: the method, then its truncation correction in words ("no correction",
// "water cylinder", ...), then the other choices, e.g.
// "FBP, water cylinder, ramp, 576 px × 1 mm".
import { DEFAULT_PRIOR_RECIPE, isIterativeMethod } from '../iterative/options';
import { knowledgePhrase, type Knowledge } from '../knowledge';
import { describeReduction, isIdentity, type Reduction } from '../reduction';
import { fbpFieldsForKnowledge } from './best-fbp';
import { EXTEND_WORDS, type ExtendMethod } from '../truncation/extend-methods';
import { choiceLabel, describeRecipeFields, type RecipeField } from './fields';

type RecipeLike = Record<string, unknown>;

/** Short method names for labels. */
const METHOD_WORDS: Record<string, string> = { fbp: 'FBP', sart: 'SART', tv: 'TV', wtv: 'reweighted TV', prior: 'Prior-guided', dbp: 'DBP' };

/** The method in a word or two ("FBP", "reweighted TV"). */
export function methodWords(recipe: RecipeLike): string {
  const m = String(recipe.method);
  return METHOD_WORDS[m] ?? m;
}

/** A prior source in words: its short form, or the recipe or image it names. */
function priorWords(v: unknown): string {
  if (typeof v === 'string') return choiceLabel(v);
  const p = v as { source?: string; name?: string; recipe?: { method?: string; extend?: string } } | undefined;
  if (p?.source === 'recipe' && p.recipe) return choiceLabel(p.recipe.extend && p.recipe.extend !== 'none' ? `${p.recipe.method}:${p.recipe.extend}` : String(p.recipe.method));
  if (p?.source === 'image') return p.name ? `“${p.name}”` : 'image';
  return choiceLabel(`${DEFAULT_PRIOR_RECIPE.method}:${DEFAULT_PRIOR_RECIPE.extend}`);
}

/**
 * How the recipe deals with truncation, in words: FBP's detector extension ("no correction",
 * "water cylinder", ...), the prior of the prior-guided method, or what sart, tv and wtv start
 * from (iterative/start.ts: the best FBP for the knowledge, on a truncated scan by default),
 * and for DBP that it reconstructs the field of view only.
 */
export function correctionWords(recipe: RecipeLike): string {
  const m = String(recipe.method);
  if (m === 'fbp' && recipe.extend === 'outline') return 'outline filled with water';
  if (m === 'fbp') return EXTEND_WORDS[(recipe.extend ?? 'none') as ExtendMethod] ?? String(recipe.extend);
  if (m === 'prior') return `prior: ${priorWords(recipe.prior)}`;
  if (isIterativeMethod(m)) return startWords(recipe);
  if (m === 'dbp') return 'field of view only';
  return '';
}

/** "from FBP with water cylinder" (and "if truncated" when the start is automatic and nothing is known), or "from an empty image". */
function startWords(recipe: RecipeLike): string {
  const start = recipe.start ?? 'auto';
  if (start === 'zero') return 'from an empty image';
  const knowledge = recipe.knowledge as Knowledge | undefined;
  const words = `from FBP with ${correctionWords(fbpFieldsForKnowledge(knowledge))}`;
  return start === 'auto' && !knowledge ? `${words} if truncated` : words;
}

/** "FBP, water cylinder": the method and its correction, and what it knows beyond the data (the CLI's short label). */
export function methodAndCorrection(recipe: RecipeLike): string {
  const k = recipe.knowledge as Knowledge | undefined;
  // Extending from the outline names the outline already.
  const known = recipe.method === 'fbp' && recipe.extend === 'outline' && k ? { ...k, outline: undefined } : k;
  return [methodWords(recipe), correctionWords(recipe), knowledgePhrase(known)].filter(Boolean).join(', ');
}

function formatValue(f: RecipeField, v: unknown): string {
  if (f.kind === 'choice') return String(v);
  if (f.key === 'bandLimit') return `band limit ${String(v)} lp/cm`;
  if (f.kind === 'grid') {
    const g = v as { size: number; pixel: number } | undefined;
    return g ? `${g.size} px × ${g.pixel} mm` : 'automatic grid';
  }
  return `${f.key} ${String(v)}`;
}

/** The label of a recipe's result, e.g. "FBP, no correction, hann, band limit 4 lp/cm, 576 px × 1 mm". */
export function recipeLabel(recipe: RecipeLike): string {
  const parts = [methodAndCorrection(recipe)];
  for (const f of describeRecipeFields()) {
    if (f.key === 'method' || f.key === 'extend' || f.key === 'prior' || f.key === 'start') continue;
    if (f.appliesTo && !f.appliesTo(recipe)) continue;
    if (recipe[f.key] === undefined && f.kind !== 'grid') continue;
    parts.push(formatValue(f, recipe[f.key]));
  }
  const v = recipe.volume as { slices?: number; spacing?: number } | undefined;
  if (v?.slices !== undefined) parts.push(`${v.slices} slices × ${v.spacing} mm`);
  if (recipe.reduce && !isIdentity(recipe.reduce as Reduction)) parts.push(describeReduction(recipe.reduce as Reduction));
  return parts.join(', ');
}
