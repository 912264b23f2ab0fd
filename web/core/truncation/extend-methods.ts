// The detector extension methods (`--extend`, recipe field `extend`): names, kernel codes
// (match assembly/extend.ts; a test checks both) and the published source of each.

export const EXTEND_METHODS = ['none', 'edge', 'mirror', 'water', 'cosine'] as const;
export type ExtendMethod = (typeof EXTEND_METHODS)[number];

/**
 * What a recipe's `extend` may name: the kernel methods above, and 'outline', which extends from
 * the object's outline (the recipe's knowledge; completion/knowledge-extension.ts).
 */
export const RECIPE_EXTENDS = [...EXTEND_METHODS, 'outline'] as const;
export type RecipeExtend = (typeof RECIPE_EXTENDS)[number];

/** One line for 'outline', beside EXTEND_DESCRIPTIONS. */
export const OUTLINE_EXTEND_DESCRIPTION =
  'water cylinders joined to each edge, stretched per view so that every view holds the mass and first moment of the object whose part outside the measured strip is the outline filled with water (Helgason-Ludwig orders 0 and 1; completion from patient shape after Kolditz et al. 2011)';

/** Kernel method codes (assembly/extend.ts EXTEND_*). */
export const EXTEND_CODES: Record<ExtendMethod, number> = { none: 0, edge: 1, mirror: 2, water: 3, cosine: 4 };

/** Floats per view in the kernel's parameter table (assembly/extend.ts EXTEND_PARAMS). */
export const EXTEND_PARAMS = 8;

/** Each correction in a few plain words, for result labels in the page, reports and the CLI. */
export const EXTEND_WORDS: Record<ExtendMethod, string> = {
  none: 'no correction',
  edge: 'edge value',
  mirror: 'mirror',
  water: 'water cylinder',
  cosine: 'cosine taper',
};

/** One line per method for help texts, the page and reports. */
export const EXTEND_DESCRIPTIONS: Record<ExtendMethod, string> = {
  none: 'no extension: the data stop at the detector edge (zero beyond)',
  edge: 'edge value continued over half the estimated reach, then a cos^2 roll-off (constant extrapolation with smooth roll-off)',
  mirror: 'symmetric mirroring about the edge with a cos^2 weight (Ohnesorge et al., Med. Phys. 27(1):39-46, 2000)',
  water: 'water cylinder fitted to edge value and slope, fits smoothed across views (Hsieh et al., Med. Phys. 31(9):2385-2391, 2004)',
  cosine: 'cos^2 taper of the edge value over the estimated reach',
};

/** Fraction of the tail over which EDGE keeps the edge value before rolling off. */
export const EDGE_PLATEAU = 0.5;
