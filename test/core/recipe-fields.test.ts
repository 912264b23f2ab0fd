// The recipe form's field descriptions follow the recipe module: every method and filter it
// offers is a choice, every default field is described, and the summary reads the recipe.
import { describe, expect, it } from 'vitest';
import { FILTER_WINDOWS } from '../../web/core/recon/filter-design';
import { describeRecipeFields, RECIPE_FIELDS, type ChoiceField } from '../../web/core/recipe/fields';
import { methodAndCorrection, recipeLabel } from '../../web/core/recipe/label';
import { DEFAULT_RECIPE, METHODS, validateRecipe } from '../../web/core/recipe/recipe';
import { EXTEND_METHODS, RECIPE_EXTENDS } from '../../web/core/truncation/extend-methods';

describe('recipe fields', () => {
  it('offer every method and filter window of the recipe module', () => {
    const byKey = Object.fromEntries(describeRecipeFields().map((f) => [f.key, f]));
    expect((byKey.method as ChoiceField).choices.map((c) => c.value)).toEqual([...METHODS]);
    expect((byKey.filter as ChoiceField).choices.map((c) => c.value)).toEqual([...FILTER_WINDOWS]);
  });

  it('show the filter window and band limit for FBP and for the FBP the iterative methods start from', () => {
    const byKey = Object.fromEntries(describeRecipeFields().map((f) => [f.key, f]));
    for (const key of ['filter', 'bandLimit']) {
      // DBP differentiates the data and inverts the finite Hilbert transform: it has no ramp filter
      // (REFERENCES.md [noo2004]).
      expect(METHODS.filter((method) => byKey[key].appliesTo?.({ method }) ?? true), key).toEqual(METHODS.filter((m) => m !== 'dbp'));
      // A prior chosen by the user is made with its own recipe.
      expect(byKey[key].appliesTo?.({ method: 'prior', prior: 'fbp:water' }), key).toBe(false);
    }
  });

  it('offer every truncation correction; extending from the outline only to a recipe that knows the outline', () => {
    const extend = describeRecipeFields().find((f) => f.key === 'extend') as ChoiceField;
    expect(extend.choices.map((c) => c.value)).toEqual([...RECIPE_EXTENDS]);
    const offered = (r: Record<string, unknown>) => extend.choices.filter((c) => !c.when || c.when(r)).map((c) => c.value);
    expect(offered({ method: 'fbp' })).toEqual([...EXTEND_METHODS]);
    expect(offered({ method: 'fbp', knowledge: { known: [{ shape: 'circle', x: 0, y: 0, r: 5, hu: 0 }] } })).toEqual([...EXTEND_METHODS]);
    expect(offered({ method: 'fbp', knowledge: { outline: { shape: 'ellipse', cx: 0, cy: 0, a: 170, b: 120 } } })).toEqual([...RECIPE_EXTENDS]);
  });

  it('describe every field of the default recipe (add a description in fields.ts for a new one)', () => {
    const described = new Set(RECIPE_FIELDS.map((f) => f.key));
    const missing = Object.keys(DEFAULT_RECIPE).filter((k) => !described.has(k));
    expect(missing).toEqual([]);
  });

  it('number fields accept their own limits in validateRecipe', () => {
    for (const f of RECIPE_FIELDS) {
      if (f.kind !== 'number' && f.kind !== 'integer') continue;
      for (const v of [f.min, f.max]) expect(() => validateRecipe({ ...DEFAULT_RECIPE, [f.key]: v })).not.toThrow();
    }
  });

  it('label a result in one line: the method, its truncation correction in words, then the other choices', () => {
    expect(recipeLabel({ method: 'fbp', filter: 'hann', bandLimit: 4 })).toBe('FBP, no correction, hann, band limit 4 lp/cm, automatic grid');
    expect(recipeLabel({ method: 'fbp', extend: 'none', filter: 'ramp', grid: { size: 576, pixel: 1 } })).toBe('FBP, no correction, ramp, 576 px × 1 mm');
    expect(recipeLabel({ method: 'fbp', extend: 'water', filter: 'ramp', grid: { size: 576, pixel: 1 } })).toBe('FBP, water cylinder, ramp, 576 px × 1 mm');
    expect(recipeLabel({ method: 'fbp', filter: 'ramp', volume: { slices: 20, spacing: 6 } })).toBe('FBP, no correction, ramp, automatic grid, 20 slices × 6 mm');
    expect(recipeLabel({ method: 'prior', prior: { source: 'image', resultId: 'r1', name: 'earlier scan' } })).toBe('Prior-guided, prior: “earlier scan”, automatic grid');
    expect(recipeLabel({ method: 'sart', filter: 'ramp', iterations: 5 })).toBe('SART, from FBP with water cylinder if truncated, ramp, automatic grid, iterations 5');
    expect(recipeLabel({ method: 'tv', filter: 'ramp', start: 'zero' })).toBe('TV, from an empty image, automatic grid');
    expect(methodAndCorrection({ method: 'wtv', start: 'fbp' })).toBe('reweighted TV, from FBP with water cylinder');
    expect(methodAndCorrection({ method: 'sart', knowledge: { outline: { shape: 'ellipse', cx: 0, cy: 0, a: 150, b: 100 } } })).toBe('SART, from FBP with outline filled with water, outline');
    expect(recipeLabel({ method: 'fbp', volume: { slices: 20, spacing: 6 }, reduce: { bin: 2, rows: [10, 90] } })).toBe('FBP, no correction, automatic grid, 20 slices × 6 mm, 2 x 2 detector binning, rows 10 to 89');
    expect(methodAndCorrection({ method: 'fbp', extend: 'cosine' })).toBe('FBP, cosine taper');
    expect(methodAndCorrection({ method: 'fbp', extend: 'edge' })).toBe('FBP, edge value');
    expect(methodAndCorrection({ method: 'fbp', extend: 'mirror' })).toBe('FBP, mirror');
    expect(methodAndCorrection({ method: 'prior' })).toBe('Prior-guided, prior: FBP with water cylinder extension');
    // Extending from the outline names it once.
    const outline = { shape: 'ellipse', cx: 0, cy: 0, a: 150, b: 100 };
    expect(methodAndCorrection({ method: 'fbp', extend: 'outline', knowledge: { outline } })).toBe('FBP, outline filled with water');
    expect(methodAndCorrection({ method: 'fbp', extend: 'water', knowledge: { outline } })).toBe('FBP, water cylinder, outline');
    expect(methodAndCorrection({ method: 'sart', knowledge: { known: [{ shape: 'circle', x: 0, y: 0, r: 5, hu: 0 }], outline: { shape: 'ellipse', cx: 0, cy: 0, a: 150, b: 100 } } }))
      .toBe('SART, from FBP with water cylinder, 1 known region + outline');
    expect(recipeLabel({ method: 'dbp', knowledge: { known: [{ shape: 'circle', x: 0, y: 0, r: 5, hu: 0 }] } })).toBe('DBP, field of view only, 1 known region, automatic grid');
  });
});

describe('recipe field defaults shown by forms', () => {
  // A form that leaves a field empty must show what the method will use (iterative/options.ts).
  it('name the iterative methods\' own defaults, and a default choice that exists', () => {
    const byKey = Object.fromEntries(describeRecipeFields().map((f) => [f.key, f]));
    expect(byKey.iterations.defaultOf!({ method: 'sart' })).toBe(20);
    expect(byKey.tvStrength.defaultOf!({ method: 'tv' })).toBe(0.002);
    expect(byKey.tvStrength.defaultOf!({ method: 'wtv' })).toBe(0.005);
    const prior = byKey.prior as ChoiceField;
    expect(prior.choices.map((c) => c.value)).toContain(prior.defaultOf!({ method: 'prior' }));
    const support = byKey.support as ChoiceField;
    expect(support.choices.map((c) => c.value)).toContain(support.defaultOf!({ method: 'sart' }));
  });
});
