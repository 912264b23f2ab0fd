// What a recipe form shows: one description per recipe field, built from the recipe module's
// own lists (METHODS, FILTER_WINDOWS, DEFAULT_RECIPE), so a new method or option appears in the
// page without touching the page. Whoever adds a recipe field adds its description here;
// a field of DEFAULT_RECIPE that has none still appears, as a plain input of its default's type
// (describeRecipeFields), and test/core/recipe-fields.test.ts names it.
import { FILTER_WINDOWS, MAX_BAND_LIMIT } from '../recon/filter-design';
import { EXTEND_METHODS } from '../truncation/extend-methods';
import { DEFAULT_PRIOR_RECIPE, isIterativeMethod, resolveOptions, type IterativeOptions } from '../iterative/options';
import { DEFAULT_RECIPE, METHODS } from './recipe';

export interface FieldChoice {
  value: string;
  label: string;
  /** When present, the choice is offered only for recipes where this returns true (e.g. it needs knowledge the recipe has). */
  when?: (recipe: Record<string, unknown>) => boolean;
}

interface FieldBase {
  /** Key in the recipe object. */
  key: string;
  /** Plain-words label. */
  label: string;
  /** One sentence on what the field does. */
  help: string;
  /** When present, the field matters only for recipes where this returns true. */
  appliesTo?: (recipe: Record<string, unknown>) => boolean;
  /** The value the method uses when the recipe leaves the field out (shown by forms). */
  defaultOf?: (recipe: Record<string, unknown>) => number | string;
}

export interface ChoiceField extends FieldBase {
  kind: 'choice';
  choices: FieldChoice[];
}

export interface NumberField extends FieldBase {
  kind: 'number' | 'integer';
  min: number;
  max: number;
  step: number;
  unit?: string;
}

/** The reconstruction grid: automatic, or size (pixels) and pixel size (mm). */
export interface GridField extends FieldBase {
  kind: 'grid';
}

export interface TextField extends FieldBase {
  kind: 'text';
}

export type RecipeField = ChoiceField | NumberField | GridField | TextField;

/** Readable names for known choice values; unknown values show as they are. */
const CHOICE_LABELS: Record<string, string> = {
  fbp: 'Filtered backprojection (FBP)',
  'fbp:water': 'FBP with water cylinder extension',
  'fbp:mirror': 'FBP with mirror extension',
  'fbp:edge': 'FBP with edge extension',
  'fbp:cosine': 'FBP with cosine taper extension',
  sart: 'SART (algebraic, iterative)',
  tv: 'Total variation (iterative)',
  wtv: 'Reweighted total variation (iterative)',
  prior: 'Prior-guided, data-consistent (iterative)',
  ramp: 'Ramp (sharpest)',
  'shepp-logan': 'Shepp-Logan',
  cosine: 'Cosine',
  hamming: 'Hamming',
  hann: 'Hann (smoothest)',
  none: 'None',
  edge: 'Repeat the edge value',
  mirror: 'Mirror with taper',
  water: 'Water cylinder fit',
};

/** Choices of a list, with readable labels (`labels` overrides the shared ones for this list). */
export function choicesOf(values: readonly string[], labels: Record<string, string> = {}): FieldChoice[] {
  return values.map((value) => ({ value, label: labels[value] ?? CHOICE_LABELS[value] ?? value }));
}

/** The readable label of a choice value. */
export function choiceLabel(value: string): string {
  return CHOICE_LABELS[value] ?? value;
}

const isFbp = (r: Record<string, unknown>) => r.method === 'fbp';
const isIterative = (r: Record<string, unknown>) => isIterativeMethod(String(r.method));
const usesTv = (r: Record<string, unknown>) => r.method === 'tv' || r.method === 'wtv' || r.method === 'prior';
const isReweighted = (r: Record<string, unknown>) => r.method === 'wtv' || r.method === 'prior';
const isPrior = (r: Record<string, unknown>) => r.method === 'prior';
const hasOutline = (r: Record<string, unknown>) => !!(r.knowledge as { outline?: unknown } | undefined)?.outline;

/** Described fields, in form order. */
export const RECIPE_FIELDS: RecipeField[] = [
  { key: 'method', label: 'Method', kind: 'choice', choices: choicesOf(METHODS), help: 'How the image is computed from the projections.' },
  {
    key: 'filter', label: 'Filter window', kind: 'choice', choices: choicesOf(FILTER_WINDOWS), appliesTo: isFbp,
    help: 'Apodization of the ramp filter, sharpest first: smoother windows trade resolution for less noise.',
  },
  {
    key: 'bandLimit', label: 'Band limit', kind: 'number', min: 0.5, max: MAX_BAND_LIMIT, step: 0.5, unit: 'lp/cm', appliesTo: isFbp,
    defaultOf: () => 'full band',
    help: 'Spatial frequency where the filter window ends, in line pairs per cm at the isocentre (empty: the detector\'s Nyquist frequency).',
  },
  {
    key: 'extend', label: 'Truncation correction', kind: 'choice', appliesTo: isFbp,
    choices: [...choicesOf(EXTEND_METHODS, { cosine: 'Cosine taper of the edge value' }), { value: 'outline', label: 'Outline filled with water', when: hasOutline }],
    help: 'How the cut-off projections are continued beyond the detector edges before filtering, as far as the object is estimated to reach (or, with the outline as knowledge, as far as the outline).',
  },
  { key: 'grid', label: 'Image grid', kind: 'grid', help: 'Pixels along each side and pixel size; automatic covers the measured field of view and the estimated object.' },
  {
    key: 'iterations', label: 'Iterations', kind: 'integer', min: 1, max: 1000, step: 1, appliesTo: isIterative,
    help: 'Full passes over all views (at most; the residual tolerance may stop earlier).',
  },
  {
    key: 'subsets', label: 'Ordered subsets', kind: 'integer', min: 1, max: 1000, step: 1, appliesTo: isIterative,
    help: 'Groups of views updated in turn: more subsets converge faster per pass but amplify noise.',
  },
  {
    key: 'relaxation', label: 'Relaxation', kind: 'number', min: 0.05, max: 1.95, step: 0.05, appliesTo: isIterative,
    help: 'Fraction of each SART correction applied (0 to 2; lower is slower and less noisy).',
  },
  {
    key: 'tolerance', label: 'Residual tolerance', kind: 'number', min: 0, max: 0.5, step: 0.001, appliesTo: isIterative,
    help: 'Stop once the measured-data residual falls below this fraction of its start (0: run all iterations).',
  },
  {
    key: 'tvStrength', label: 'TV strength', kind: 'number', min: 0.0005, max: 1, step: 0.0005, appliesTo: usesTv,
    help: 'Length of the total-variation steps relative to the image (ASD-POCS alpha): more smooths more.',
  },
  {
    key: 'tvSteps', label: 'TV steps', kind: 'integer', min: 1, max: 200, step: 1, appliesTo: usesTv,
    help: 'Total-variation descent steps after each pass over the data.',
  },
  {
    key: 'tvEps', label: 'Edge threshold', kind: 'number', min: 0.00001, max: 0.1, step: 0.0001, unit: '1/mm', appliesTo: isReweighted,
    help: 'Reweighted TV: gradients well above this (per pixel) count as edges and are smoothed less.',
  },
  {
    key: 'priorWeight', label: 'Prior weight', kind: 'number', min: 0.05, max: 1, step: 0.05, appliesTo: isPrior,
    help: 'Weight of the prior\'s projections beyond the detector, relative to the measured data.',
  },
  {
    key: 'prior', label: 'Prior', kind: 'choice', appliesTo: isPrior,
    choices: choicesOf(EXTEND_METHODS.filter((e) => e !== 'none').map((e) => `fbp:${e}`).concat('fbp')),
    help: 'The image the method starts from and whose projections fill the channels beyond the detector; the measured data overrule it inside the field of view.',
  },
  {
    key: 'support', label: 'Support', kind: 'choice', choices: choicesOf(['disk', 'grid'], { disk: 'Disk inscribed in the grid', grid: 'Whole grid' }), appliesTo: isIterative,
    help: 'Pixels reconstructed; outside they stay zero.',
  },
];

/** The iterative method's own default of an option (iterative/options.ts). */
const iterativeDefault = (key: keyof IterativeOptions) => (r: Record<string, unknown>) =>
  resolveOptions(isIterativeMethod(String(r.method)) ? (r.method as 'sart') : 'sart', {})[key] as number | string;

for (const f of RECIPE_FIELDS) {
  if (f.key === 'prior') f.defaultOf = () => `${DEFAULT_PRIOR_RECIPE.method}:${DEFAULT_PRIOR_RECIPE.extend}`;
  else if (['iterations', 'subsets', 'relaxation', 'tolerance', 'tvStrength', 'tvSteps', 'tvEps', 'priorWeight', 'support'].includes(f.key)) {
    f.defaultOf = iterativeDefault(f.key as keyof IterativeOptions);
  }
}

/**
 * Every field a form should offer: the described ones, then any field of DEFAULT_RECIPE that has
 * no description yet, as a plain input of its default's type.
 */
export function describeRecipeFields(): RecipeField[] {
  const known = new Set(RECIPE_FIELDS.map((f) => f.key));
  const extra: RecipeField[] = [];
  for (const [key, value] of Object.entries(DEFAULT_RECIPE as unknown as Record<string, unknown>)) {
    if (known.has(key)) continue;
    const label = key.replace(/([A-Z])/g, ' $1').replace(/^./, (c) => c.toUpperCase());
    const help = `Recipe option "${key}".`;
    if (typeof value === 'number') {
      extra.push({ key, label, help, kind: Number.isInteger(value) ? 'integer' : 'number', min: -1e9, max: 1e9, step: Number.isInteger(value) ? 1 : 0.01 });
    } else {
      extra.push({ key, label, help, kind: 'text' });
    }
  }
  return [...RECIPE_FIELDS, ...extra];
}
