// Recipe fields of the iterative methods (sart, tv, wtv, prior): their types, defaults and
// validation. recipe.ts calls validateIterativeFields; the solver reads resolved options.
import { InputError } from '../errors';
import type { Recipe } from '../recipe/recipe';

export const ITERATIVE_METHODS = ['sart', 'tv', 'wtv', 'prior'] as const;
export type IterativeMethod = (typeof ITERATIVE_METHODS)[number];

export const SUPPORTS = ['disk', 'grid', 'image'] as const;
/** disk: the disk inscribed in the grid (a cylinder for volumes); grid: every pixel; image: a mask image given with the run. */
export type SupportShape = (typeof SUPPORTS)[number];

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
  /** --method prior: where the prior image comes from. */
  prior?: PriorSource;
}

/** Resolved options the solver runs with. */
export type IterativeOptions = Required<Omit<IterativeFields, 'prior'>>;

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
  };
  if (r.nonNegative !== undefined) {
    if (typeof r.nonNegative !== 'boolean') throw new InputError(`recipe nonNegative: got ${JSON.stringify(r.nonNegative)}, expected true or false`);
    out.nonNegative = r.nonNegative;
  }
  if (r.support !== undefined) {
    if (!(SUPPORTS as readonly unknown[]).includes(r.support)) throw new InputError(`recipe support: got ${JSON.stringify(r.support)}, expected one of ${SUPPORTS.join(', ')}`);
    out.support = r.support as SupportShape;
  }
  if (isIterativeMethod(r.method as string) && r.extend !== undefined && r.extend !== 'none') {
    throw new InputError(`recipe extend: got "${r.extend}" for method "${r.method}", expected "none" (detector extension belongs to fbp; for method "prior", to the prior's recipe)`);
  }
  if (r.prior !== undefined) out.prior = validatePrior(r.prior, validateNested);
  else if (r.method === 'prior') out.prior = { source: 'recipe', recipe: validateNested(DEFAULT_PRIOR_RECIPE) };
  if (r.method !== 'prior' && out.prior) throw new InputError(`recipe prior: given for method "${r.method}", only method "prior" uses one`);
  for (const k of Object.keys(out) as Array<keyof IterativeFields>) if (out[k] === undefined) delete out[k];
  return out;
}

/** The prior when a recipe names none: FBP of the scan with water-cylinder extrapolation. */
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
  return { source: 'recipe', recipe: validateNested(p.recipe) };
}

/** The options a recipe asks for, defaults filled. */
export function resolveOptions(method: IterativeMethod, fields: IterativeFields): IterativeOptions {
  const out = { ...ITERATIVE_DEFAULTS, ...(method === 'tv' ? { tvStrength: TV_STRENGTH_PLAIN } : {}) };
  for (const k of Object.keys(ITERATIVE_DEFAULTS) as Array<keyof IterativeOptions>) {
    if (fields[k] !== undefined) (out as Record<string, unknown>)[k] = fields[k];
  }
  return out;
}

/** True for the methods this module runs. */
export function isIterativeMethod(m: string): m is IterativeMethod {
  return (ITERATIVE_METHODS as readonly string[]).includes(m);
}
