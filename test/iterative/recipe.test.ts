// Recipe fields of the iterative methods: defaults, and one clear error per bad field naming the
// field, the value received and what was expected.
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { ITERATIVE_DEFAULTS, resolveOptions } from '../../web/core/iterative/options';
import { METHODS, validateRecipe } from '../../web/core/recipe/recipe';
import { describeRecipeFields, type ChoiceField } from '../../web/core/recipe/fields';
import { recipeLabel } from '../../web/core/recipe/label';
import { runRecipe } from '../../web/core/recipe/run';
import { squareGrid } from '../../web/core/image';
import { localWorkspace } from '../helpers/engine';
import { fanFlat } from '../helpers/geometries';

describe('iterative recipe fields', () => {
  it('offers the methods and keeps only the fields given', () => {
    expect(METHODS).toEqual(['fbp', 'sart', 'tv', 'wtv', 'prior']);
    const r = validateRecipe({ method: 'sart', iterations: 7, subsets: 3 });
    expect(r).toMatchObject({ method: 'sart', iterations: 7, subsets: 3 });
    expect('relaxation' in r).toBe(false);
    expect(resolveOptions('sart', r)).toEqual({ ...ITERATIVE_DEFAULTS, iterations: 7, subsets: 3 });
    // Plain TV takes a smaller default TV step than the reweighted methods.
    expect(resolveOptions('tv', {}).tvStrength).toBeLessThan(resolveOptions('wtv', {}).tvStrength);
  });

  it('validates the prior source, including the recipe of a prior', () => {
    const r = validateRecipe({ method: 'prior', prior: { source: 'recipe', recipe: { method: 'fbp', filter: 'hann' } } });
    expect(r.prior).toEqual({ source: 'recipe', recipe: { method: 'fbp', filter: 'hann', extend: 'none' } });
    const water = validateRecipe({ method: 'prior', prior: { source: 'recipe', recipe: { method: 'fbp', extend: 'water' } } });
    expect(water.prior).toMatchObject({ recipe: { extend: 'water' } });
    expect(validateRecipe({ method: 'prior', prior: { source: 'image' } }).prior).toEqual({ source: 'image' });
    expect(validateRecipe({ method: 'prior', prior: { source: 'image', resultId: 'r1', name: 'FBP', extra: 1 } }).prior).toEqual({ source: 'image', resultId: 'r1', name: 'FBP' });
  });

  it.each([
    [{ method: 'sart', iterations: 0 }, /recipe iterations: got 0, expected a whole number from 1/],
    [{ method: 'sart', iterations: 2.5 }, /recipe iterations: got 2.5/],
    [{ method: 'sart', subsets: -1 }, /recipe subsets: got -1/],
    [{ method: 'sart', relaxation: 2 }, /recipe relaxation: got 2, expected a number in \(0, 2\)/],
    [{ method: 'sart', tolerance: 1 }, /recipe tolerance: got 1, expected a fraction in \[0, 1\)/],
    [{ method: 'tv', tvStrength: 0 }, /recipe tvStrength: got 0/],
    [{ method: 'tv', tvSteps: 'many' }, /recipe tvSteps: got "many"/],
    [{ method: 'wtv', tvEps: -1 }, /recipe tvEps: got -1, expected a small positive number in 1\/mm/],
    [{ method: 'prior', prior: { source: 'image' }, priorWeight: 1.5 }, /recipe priorWeight: got 1.5, expected a number in \(0, 1\]/],
    [{ method: 'sart', nonNegative: 'yes' }, /recipe nonNegative: got "yes", expected true or false/],
    [{ method: 'sart', support: 'square' }, /recipe support: got "square", expected one of disk, grid/],
    [{ method: 'sart', prior: { source: 'image' } }, /recipe prior: given for method "sart"/],
    [{ method: 'prior', prior: { source: 'image', resultId: 7 } }, /recipe prior\.resultId: got 7, expected a non-empty string/],
    [{ method: 'prior', prior: { source: 'web' } }, /recipe prior.source: got "web", expected "image" or "recipe"/],
    [{ method: 'prior', prior: { source: 'recipe' } }, /recipe prior.recipe: expected the recipe/],
    [{ method: 'prior', prior: { source: 'recipe', recipe: { method: 'prior' } } }, /recipe prior.recipe.method: got "prior"/],
    [{ method: 'prior', prior: { source: 'recipe', recipe: { method: 'fbp', filter: 'box' } } }, /recipe filter: got "box"/],
    [{ method: 'art' }, /recipe method: got "art", expected one of fbp, sart, tv, wtv, prior/],
    [{ method: 'fbp', filter: 'ram-lak' }, /recipe filter: got "ram-lak", expected one of ramp, shepp-logan, cosine, hamming, hann/],
    [{ method: 'fbp', bandLimit: 0 }, /recipe bandLimit: got 0, expected line pairs per cm at the isocentre, above 0 and at most 200/],
    [{ method: 'fbp', bandLimit: '5' }, /recipe bandLimit: got "5"/],
    [{ method: 'tv', extend: 'mirror' }, /recipe extend: got "mirror" for method "tv", expected "none"/],
  ])('%j is refused', (raw, message) => {
    expect(() => validateRecipe(raw)).toThrow(InputError);
    expect(() => validateRecipe(raw)).toThrow(message);
  });
});

describe('iterative runs refuse bad input before any work', () => {
  const geometry = fanFlat(64, 1, 30);
  const scan = { geometry, data: new Float32Array(30 * 64).fill(0.5), muWater: 0.02 };
  const grid = squareGrid(32, 2);
  const priorRecipe = validateRecipe({ method: 'prior', prior: { source: 'image' }, grid: { size: 32, pixel: 2 }, iterations: 1 });

  it.each([
    ['no prior image', scan, {}, /prior: the recipe takes its prior from an image, but none was given/],
    ['a prior with NaN', scan, { prior: { grid, data: new Float32Array(32 * 32).fill(NaN), quantity: 'mu' as const } }, /prior: 1024 of 1024 pixels are not finite/],
    ['a HU prior without mu_water', scan, { prior: { grid, data: new Float32Array(32 * 32), quantity: 'hu' as const } }, /prior: values are HU but its mu_water is unknown/],
    ['a scan with infinities', { ...scan, data: scan.data.map((v, i) => (i === 5 ? Infinity : v)) }, { prior: { grid, data: new Float32Array(32 * 32), quantity: 'mu' as const } }, /scan: 1 of 1920 projection values are not finite/],
  ])('%s', async (_, s, inputs, message) => {
    const ws = await localWorkspace();
    await expect(runRecipe(ws, s, priorRecipe, {}, inputs)).rejects.toThrow(message);
    await expect(runRecipe(ws, s, priorRecipe, {}, inputs)).rejects.toBeInstanceOf(InputError);
  });

  it('a grid reaching the source', async () => {
    const ws = await localWorkspace();
    await expect(runRecipe(ws, scan, validateRecipe({ method: 'sart', grid: { size: 400, pixel: 3 } }))).rejects.toThrow(/reaches \d+\.\d mm from the isocentre, expected less than the source distance 500 mm/);
  });

  it('a prior that does not cover the support is used, with a warning', async () => {
    const ws = await localWorkspace();
    const small = { grid: squareGrid(8, 2), data: new Float32Array(64).fill(0.02), quantity: 'mu' as const };
    const r = await runRecipe(ws, scan, priorRecipe, {}, { prior: small });
    expect(r.warnings.join('\n')).toMatch(/prior resampled/);
    expect(r.warnings.join('\n')).toMatch(/the prior does not cover \d+ pixels of the reconstruction support/);
  });
});

describe('prior sources a form can hold', () => {
  it('short forms and the default prior (water-extrapolated FBP)', () => {
    expect(validateRecipe({ method: 'prior', prior: 'fbp:mirror' }).prior).toEqual({ source: 'recipe', recipe: { method: 'fbp', filter: 'ramp', extend: 'mirror' } });
    expect(validateRecipe({ method: 'prior', prior: 'tv' }).prior).toMatchObject({ source: 'recipe', recipe: { method: 'tv' } });
    expect(validateRecipe({ method: 'prior' }).prior).toMatchObject({ source: 'recipe', recipe: { method: 'fbp', extend: 'water' } });
    expect(() => validateRecipe({ method: 'prior', prior: 'fbp:sideways' })).toThrow(/recipe extend: got "sideways"/);
    expect(() => validateRecipe({ method: 'prior', prior: 'FBP water' })).toThrow(/recipe prior: got "FBP water", expected a method, optionally with a detector extension/);
  });

  it('the form offers them and the summary names the prior', () => {
    const field = describeRecipeFields().find((f) => f.key === 'prior') as ChoiceField;
    for (const c of field.choices) expect(() => validateRecipe({ method: 'prior', prior: c.value })).not.toThrow();
    expect(recipeLabel({ method: 'prior', prior: 'fbp:water', iterations: 20 })).toBe('Prior-guided, prior: FBP with water cylinder extension, automatic grid, iterations 20');
  });
});
