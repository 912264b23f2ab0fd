// Which results the Images tab compares: at most MAX_COMPARED at once. A result that comes in
// while the comparison is full (a finished run, a tick, "bring back the baseline") waits until the
// user chooses which image leaves: nothing is dropped behind their back, least of all the
// uncorrected baseline a correction is judged against.

/** Most results compared side by side. */
export const MAX_COMPARED = 4;

export interface CompareSet {
  /** Compared result ids, in order. */
  ids: string[];
  /** A result waiting for a place (the user chooses which one leaves), or undefined. */
  waiting?: string;
}

/** A result comes in: it joins when there is room (or is already in), else it waits. */
export function offer(set: CompareSet, id: string, max = MAX_COMPARED): CompareSet {
  if (set.ids.includes(id)) return { ids: set.ids, waiting: set.waiting === id ? undefined : set.waiting };
  if (set.ids.length < max) return { ids: [...set.ids, id], waiting: set.waiting === id ? undefined : set.waiting };
  return { ids: set.ids, waiting: id };
}

/** A result leaves (unticked or deleted); nothing waits any more if it was the one waiting. */
export function withdraw(set: CompareSet, id: string): CompareSet {
  return { ids: set.ids.filter((x) => x !== id), waiting: set.waiting === id ? undefined : set.waiting };
}

/** The waiting result takes the place of `leaving` (same position, so its colour is the one that left). */
export function replace(set: CompareSet, leaving: string): CompareSet {
  if (!set.waiting || !set.ids.includes(leaving)) return set;
  return { ids: set.ids.map((x) => (x === leaving ? set.waiting! : x)) };
}

/** What a result needs for baseline detection. */
export interface RecipeOf {
  id: string;
  recipe: Record<string, unknown>;
}

/** The uncorrected baseline among a scan's results (oldest first): the latest FBP without truncation correction. */
export function baselineOf(results: readonly RecipeOf[]): string | undefined {
  for (let i = results.length - 1; i >= 0; i--) {
    const r = results[i].recipe;
    if (r.method === 'fbp' && (r.extend === undefined || r.extend === 'none')) return results[i].id;
  }
  return undefined;
}
