// The rows of the accuracy bench: a method, and the knowledge it is given. Adding a method is one
// line in ACCURACY_ROWS: its label, a recipe for the knowledge it is handed (undefined: nothing
// known), and the kinds of knowledge to run it with.
import type { Knowledge } from '../../../core/knowledge';
import { fbpRecipeForKnowledge } from '../../../core/recipe/knowledge-recipe';
import type { SevereCase } from './cases';

/** What the user knows in a bench run. */
export const KNOWLEDGE_KINDS = ['none', 'region', 'outline', 'both'] as const;
export type KnowledgeKind = (typeof KNOWLEDGE_KINDS)[number];

/**
 * Deliberately wrong or different knowledge, to show how robust each method is to it, and the
 * outline that holds everything in the slice (the convex hull of the object) beside the ellipse.
 */
export const WRONG_KNOWLEDGE = ['region +20 HU', 'region -20 HU', 'outline +10 mm', 'outline: hull'] as const;
export type WrongKnowledge = (typeof WRONG_KNOWLEDGE)[number];

export interface AccuracyRow {
  label: string;
  /** The recipe (plain JSON, validated by the bench) given the knowledge; undefined knowledge: none. */
  recipe: (knowledge: Knowledge | undefined) => unknown;
  kinds: readonly KnowledgeKind[];
  /** Also run on the robustness variants (noise, short scan, off-centre field, wrong knowledge). */
  robustness?: boolean;
}

/** Iterations of the iterative rows: the bench's `iterative` section's count. */
const ITERATIONS = 20;

export const ACCURACY_ROWS: AccuracyRow[] = [
  { label: 'FBP, no extension', recipe: () => ({ method: 'fbp' }), kinds: ['none'] },
  { label: 'FBP + water cylinder', recipe: () => ({ method: 'fbp', extend: 'water' }), kinds: ['none'], robustness: true },
  { label: 'FBP, best for the knowledge', recipe: (k) => fbpRecipeForKnowledge(k), kinds: ['region', 'outline', 'both'], robustness: true },
  { label: 'OS-SART', recipe: () => ({ method: 'sart', iterations: ITERATIONS }), kinds: ['none'] },
];

/** The knowledge of a kind for a case (its known disc and the outline a user would draw). */
export function knowledgeFor(c: SevereCase, kind: KnowledgeKind | WrongKnowledge): Knowledge | undefined {
  const o = c.outline;
  switch (kind) {
    case 'none': return undefined;
    case 'region': return { known: [c.known] };
    case 'outline': return { outline: o };
    case 'both': return { known: [c.known], outline: o };
    case 'region +20 HU': return { known: [{ ...c.known, hu: c.known.hu + 20 }] };
    case 'region -20 HU': return { known: [{ ...c.known, hu: c.known.hu - 20 }] };
    case 'outline +10 mm': return o.shape === 'ellipse' ? { outline: { ...o, a: o.a + 10, b: o.b + 10 } } : { outline: o };
    case 'outline: hull': return { outline: c.hull };
  }
}
