// Recipe fields of the iterative methods (sart, tv, wtv, prior): their types, defaults and
// validation. recipe.ts calls validateIterativeFields; the solver reads resolved options.
import { InputError } from '../errors';
import { validateKnowledge } from '../knowledge';
import { fbpFieldsForKnowledge, type FbpChoices } from '../recipe/best-fbp';
import type { Recipe } from '../recipe/recipe';

export const ITERATIVE_METHODS = ['sart', 'tv', 'wtv', 'prior'] as const;
export type IterativeMethod = (typeof ITERATIVE_METHODS)[number];

export const SUPPORTS = ['disk', 'grid', 'image', 'outline'] as const;
/**
 * disk: the disk inscribed in the grid (a cylinder for volumes); grid: every pixel; image: a mask
 * image given with the run; outline: inside the object's outline given as the recipe's knowledge.
 */
export type SupportShape = (typeof SUPPORTS)[number];

export const STARTS = ['auto', 'fbp', 'zero'] as const;
/**
 * The image sart, tv and wtv start from: fbp, the best FBP correction for the recipe's knowledge
 * (start.ts); zero, an empty image; auto (also when absent): fbp when the scan is truncated or
 * the recipe knows something, else zero.
 */
export type StartImage = (typeof STARTS)[number];

/**
 * Where the prior of --method prior comes from: an image handed to runRecipe (a file, or the
 * stored result `resultId` that the page's coordinator loads), or the result of another recipe
 * on the same scan.
 */
export type PriorSource = { source: 'image'; resultId?: string; name?: string } | { source: 'recipe'; recipe: Recipe };

/** Optional recipe fields of the iterative methods (absent: the default below). */
export interface IterativeFields {
  /** Outer iterations (full sweeps over all subsets), at most. */
  iterations?: number;
  /** Ordered subsets of views per sweep (1: SIRT-like; the view count: classic SART). */
  subsets?: number;
  /** SART relaxation lambda, (0, 2). */
  relaxation?: number;
  /** Stop once the measured-data residual falls below this fraction of its start (0: never). */
  tolerance?: number;
  /** ASD-POCS TV step, as a fraction of the data step's image change (alpha), (0, 1]. */
  tvStrength?: number;
  /** TV steepest-descent steps per iteration (N_grad). */
  tvSteps?: number;
  /** Reweighted TV: eps in w = 1 / (|grad f| + eps), 1/mm per pixel. */
  tvEps?: number;
  /** Weight of the prior's projections on unmeasured channels relative to measured data, (0, 1]. */
  priorWeight?: number;
  /** Clip negative attenuation after each update. */
  nonNegative?: boolean;
  /** Region reconstructed (pixels outside stay 0). */
  support?: SupportShape;
  /** sart, tv, wtv: the start image. */
  start?: StartImage;
  /**
   * Step inside the measured field of view relative to outside, (0, 1]. Absent: small
   * (inside-step.ts) when the start was made from the scan's own data and the scan is truncated,
   * else 1.
   */
  insideStep?: number;
  /** --method prior: where the prior image comes from. */
  prior?: PriorSource;
}

/** Resolved options the solver runs with (start, insideStep: as asked; run.ts resolves absent ones). */
export type IterativeOptions = Required<Omit<IterativeFields, 'prior' | 'insideStep' | 'start'>> & Pick<IterativeFields, 'insideStep' | 'start'>;

/**
 * Defaults. N_grad = 20 and the step-control constants follow Sidky & Pan 2008 (from memory,
 * REFERENCES.md [sidky-pan-2008]). Their alpha = 0.2 suits a ray-by-ray ART data step; with OS-SART
 * and our step scale (solve.ts) the TV phase needs far less: tuned on the test phantoms
 * (test/iterative), 0.002 for TV and 0.005 for reweighted TV, whose weights shrink the steps
 * at edges. Relaxation 0.5 keeps OS-SART's subset noise down on noisy data (common practice).
 */
export const ITERATIVE_DEFAULTS: IterativeOptions = {
  iterations: 20,
  subsets: 20,
  relaxation: 0.5,
  tolerance: 0,
  tvStrength: 0.005,
  tvSteps: 20,
  tvEps: 0.0005,
  priorWeight: 1,
  nonNegative: true,
  support: 'disk',
};

/** Plain TV smooths edges too, so it takes a smaller default TV step than reweighted TV. */
const TV_STRENGTH_PLAIN = 0.002;

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function wholeNumber(r: Record<string, unknown>, key: string, lo: number, hi: number): number | undefined {
  const v = r[key];
  if (v === undefined) return undefined;
  if (!Number.isInteger(v) || (v as number) < lo || (v as number) > hi) throw new InputError(`recipe ${key}: got ${JSON.stringify(v)}, expected a whole number from ${lo} to ${hi}`);
  return v as number;
}

function number(r: Record<string, unknown>, key: string, ok: (x: number) => boolean, expected: string): number | undefined {
  const v = r[key];
  if (v === undefined) return undefined;
  if (typeof v !== 'number' || !Number.isFinite(v) || !ok(v)) throw new InputError(`recipe ${key}: got ${JSON.stringify(v)}, expected ${expected}`);
  return v;
}

/**
 * Checks the iterative fields of a raw recipe and returns those present. `validateNested`
 * validates the recipe of a prior (recipe.ts passes validateRecipe).
 */
export function validateIterativeFields(
  r: Record<string, unknown>,
  validateNested: (raw: unknown) => Recipe,
): IterativeFields {
  const out: IterativeFields = {
    iterations: wholeNumber(r, 'iterations', 1, 10000),
    subsets: wholeNumber(r, 'subsets', 1, 100000),
    relaxation: number(r, 'relaxation', (x) => x > 0 && x < 2, 'a number in (0, 2)'),
    tolerance: number(r, 'tolerance', (x) => x >= 0 && x < 1, 'a fraction in [0, 1)'),
    tvStrength: number(r, 'tvStrength', (x) => x > 0 && x <= 1, 'a number in (0, 1]'),
    tvSteps: wholeNumber(r, 'tvSteps', 1, 1000),
    tvEps: number(r, 'tvEps', (x) => x > 0 && x < 1, 'a small positive number in 1/mm (e.g. 0.0005)'),
    priorWeight: number(r, 'priorWeight', (x) => x > 0 && x <= 1, 'a number in (0, 1]'),
    insideStep: number(r, 'insideStep', (x) => x > 0 && x <= 1, 'a number in (0, 1]'),
  };
  if (r.nonNegative !== undefined) {
    if (typeof r.nonNegative !== 'boolean') throw new InputError(`recipe nonNegative: got ${JSON.stringify(r.nonNegative)}, expected true or false`);
    out.nonNegative = r.nonNegative;
  }
  if (r.support !== undefined) {
    if (!(SUPPORTS as readonly unknown[]).includes(r.support)) throw new InputError(`recipe support: got ${JSON.stringify(r.support)}, expected one of ${SUPPORTS.join(', ')}`);
    out.support = r.support as SupportShape;
  }
  if (r.start !== undefined) {
    if (!(STARTS as readonly unknown[]).includes(r.start)) throw new InputError(`recipe start: got ${JSON.stringify(r.start)}, expected one of ${STARTS.join(', ')}`);
    if (r.method === 'prior') throw new InputError('recipe start: method "prior" starts from its prior; give the prior instead');
    out.start = r.start as StartImage;
  }
  if (out.support === 'outline' && !(isObject(r.knowledge) && r.knowledge.outline !== undefined)) {
    throw new InputError('recipe support: got "outline", but the recipe knows no outline', {
      field: 'support', remedy: { cli: 'give the outline of the object as knowledge (--outline ellipse:cx,cy,a,b)', page: 'give the outline of the object (draw it or give an ellipse in the knowledge panel)' },
    });
  }
  if (isIterativeMethod(r.method as string) && r.extend !== undefined && r.extend !== 'none') {
    throw new InputError(`recipe extend: got "${r.extend}" for method "${r.method}", expected "none" (detector extension belongs to fbp; for method "prior", to the prior's recipe)`);
  }
  if (r.prior !== undefined) out.prior = validatePrior(r.prior, validateNested);
  else if (r.method === 'prior') out.prior = { source: 'recipe', recipe: validateNested(defaultPriorFields(r)) };
  if (r.method !== 'prior' && out.prior) throw new InputError(`recipe prior: given for method "${r.method}", only method "prior" uses one`);
  for (const k of Object.keys(out) as Array<keyof IterativeFields>) if (out[k] === undefined) delete out[k];
  return out;
}

/** The prior of method "prior" when a recipe names none, in words of a prior choice: FBP with water-cylinder extrapolation (with knowledge: best-fbp.ts). */
export const DEFAULT_PRIOR_RECIPE = { method: 'fbp', extend: 'water' } as const;

/**
 * A prior source from JSON: {"source": "image"}, {"source": "recipe", "recipe": {...}}, or the
 * short form "METHOD" / "METHOD:EXTEND" (e.g. "fbp:water") for a recipe of that method and
 * detector extension (what a form's choice can hold).
 */
function validatePrior(p: unknown, validateNested: (raw: unknown) => Recipe): PriorSource {
  if (typeof p === 'string') {
    const m = /^([a-z]+)(?::([a-z]+))?$/.exec(p);
    if (!m) throw new InputError(`recipe prior: got ${JSON.stringify(p)}, expected a method, optionally with a detector extension (e.g. "fbp:water")`);
    return validatePrior({ source: 'recipe', recipe: m[2] ? { method: m[1], extend: m[2] } : { method: m[1] } }, validateNested);
  }
  if (!isObject(p)) throw new InputError(`recipe prior: got ${JSON.stringify(p)}, expected {"source": "image"} or {"source": "recipe", "recipe": {...}}`);
  if (p.source === 'image') {
    const out: PriorSource = { source: 'image' };
    for (const k of ['resultId', 'name'] as const) {
      if (p[k] === undefined) continue;
      if (typeof p[k] !== 'string' || !p[k]) throw new InputError(`recipe prior.${k}: got ${JSON.stringify(p[k])}, expected a non-empty string`);
      out[k] = p[k] as string;
    }
    return out;
  }
  if (p.source !== 'recipe') throw new InputError(`recipe prior.source: got ${JSON.stringify(p.source)}, expected "image" or "recipe"`);
  if (!isObject(p.recipe)) throw new InputError('recipe prior.recipe: expected the recipe (an object) whose result is the prior');
  if (p.recipe.method === 'prior') throw new InputError('recipe prior.recipe.method: got "prior", expected a method that needs no prior (e.g. fbp)');
  // DBP determines the measured field of view only (Noo, Clackdoyle & Pack 2004): nothing to fill the channels beyond the detector with.
  if (p.recipe.method === 'dbp') throw new InputError('recipe prior.recipe.method: got "dbp", expected a method that fills the whole grid (e.g. fbp): DBP leaves everything outside the field of view undetermined');
  return { source: 'recipe', recipe: validateNested(p.recipe) };
}

/**
 * The default prior: the best FBP for the recipe's knowledge, with the recipe's filter window and
 * band limit (the same start as sart, tv and wtv; start.ts).
 */
function defaultPriorFields(r: Record<string, unknown>): Record<string, unknown> {
  const choices = { ...(r.filter !== undefined ? { filter: r.filter } : {}), ...(r.bandLimit !== undefined ? { bandLimit: r.bandLimit } : {}) } as FbpChoices;
  return fbpFieldsForKnowledge(validateKnowledge(r.knowledge), choices);
}

/** The options a recipe asks for, defaults filled. */
export function resolveOptions(method: IterativeMethod, fields: IterativeFields): IterativeOptions {
  const out = { ...ITERATIVE_DEFAULTS, ...(method === 'tv' ? { tvStrength: TV_STRENGTH_PLAIN } : {}) };
  for (const k of [...Object.keys(ITERATIVE_DEFAULTS), 'insideStep', 'start'] as Array<keyof IterativeOptions>) {
    if (fields[k] !== undefined) (out as Record<string, unknown>)[k] = fields[k];
  }
  return out;
}

/** True for the methods this module runs. */
export function isIterativeMethod(m: string): m is IterativeMethod {
  return (ITERATIVE_METHODS as readonly string[]).includes(m);
}
