// What a recipe knows beyond the data, chosen in the recipe form from the knowledge kept with
// the scan: each known region and the outline can be left out of a run (ticks), and the recipe
// carries the rest as plain JSON (core/knowledge/types.ts).
import { describeOutline, describeRegion, type Knowledge } from '../../core/knowledge';
import type { KnownKind } from '../../core/knowledge/guidance';
import type { ScanKnowledge } from '../../store/records';

/** The key of the outline among the items. */
export const OUTLINE_ITEM = 'outline';

export interface KnowledgeItem {
  /** The region's id, or OUTLINE_ITEM. */
  key: string;
  /** In words, as reports name it. */
  words: string;
  /** Where it came from. */
  source: string;
}

/** The items a recipe may use, in order: the known regions, then the outline. */
export function knowledgeItems(k: ScanKnowledge | undefined): KnowledgeItem[] {
  if (!k) return [];
  const items = k.regions.map((r, i) => ({ key: r.id, words: describeRegion(r.region, i), source: r.source }));
  if (k.outline) items.push({ key: OUTLINE_ITEM, words: describeOutline(k.outline.outline), source: k.outline.source });
  return items;
}

/** The recipe's knowledge: every item not left out (`off`); undefined when nothing is left. */
export function recipeKnowledge(k: ScanKnowledge | undefined, off: ReadonlySet<string>): Knowledge | undefined {
  if (!k) return undefined;
  const known = k.regions.filter((r) => !off.has(r.id)).map((r) => r.region);
  const outline = k.outline && !off.has(OUTLINE_ITEM) ? k.outline.outline : undefined;
  if (!known.length && !outline) return undefined;
  return { ...(known.length ? { known } : {}), ...(outline ? { outline } : {}) };
}

/** What the user knows, as the guidance table names it. */
export function knowledgeKind(k: Knowledge | undefined): KnownKind {
  const region = !!k?.known?.length, outline = !!k?.outline;
  return region && outline ? 'a known region and the outline' : region ? 'a known region' : outline ? 'the outline' : 'nothing';
}

/** Why a recipe with knowledge cannot run as the form stands ('' when it can), in the page's words. */
export function knowledgeProblem(recipe: Record<string, unknown>): string {
  if (!recipe.knowledge || recipe.method !== 'fbp') return '';
  if ((recipe.extend ?? 'none') === 'none') {
    return 'known regions and the outline work by adjusting a truncation correction: choose one (water cylinder is the usual one), or untick the knowledge';
  }
  return '';
}
