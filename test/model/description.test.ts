// The model description (README, "Your own network as a prior"): accepted forms, defaults, and one
// clear message per kind of mistake.
import { describe, expect, it } from 'vitest';
import { validateModelInfo } from '../../web/core/model/description';
import { networkInputRecipe } from '../../web/core/model/network-input';

/** The example of the README, with extension "none" (this build has no detector extension yet). */
// biome-ignore lint/suspicious/noExplicitAny: the tests edit the description freely, as a user's JSON is
type Json = Record<string, any>;

function example(): Json {
  return {
    format: 'rimfill-model/1',
    input: { name: 'image', quantity: 'mu', scale: 1.0, offset: 0.0, size: 256, pixel: 1.0, from: { method: 'fbp', extend: 'none' } },
    output: { name: 'prior', quantity: 'mu', scale: 1.0, offset: 0.0 },
  };
}

function withChange(edit: (d: Json) => void): Json {
  const d = example();
  edit(d);
  return d;
}

describe('model description', () => {
  it('accepts the design example and keeps its fields', () => {
    const info = validateModelInfo(example());
    expect(info).toEqual(example());
  });

  it('fills defaults: scale 1, offset 0, extension "none"; size and pixel absent mean the reconstruction grid', () => {
    const info = validateModelInfo({
      format: 'rimfill-model/1',
      name: 'thorax completion v2',
      input: { name: 'x', quantity: 'hu', from: { method: 'fbp' } },
      output: { name: 'y', quantity: 'hu', scale: 0.001 },
    });
    expect(info.input).toEqual({ name: 'x', quantity: 'hu', scale: 1, offset: 0, from: { method: 'fbp', extend: 'none' } });
    expect(info.output).toEqual({ name: 'y', quantity: 'hu', scale: 0.001, offset: 0 });
    expect(info.name).toBe('thorax completion v2');
  });

  it.each<[string, (d: Json) => void, RegExp]>([
    ['wrong format', (d) => (d.format = 'rimfill-model/2'), /format: got "rimfill-model\/2", expected "rimfill-model\/1"/],
    ['missing format', (d) => delete d.format, /format: got undefined, expected "rimfill-model\/1"/],
    ['unknown top-level field', (d) => (d.inputs = {}), /unknown field "inputs"/],
    ['misspelt input field', (d) => (d.input.scael = 2), /input: unknown field "scael" \(known: name, quantity, scale, offset, size, pixel, from\)/],
    ['missing input', (d) => delete d.input, /input: got undefined, expected an object/],
    ['missing output', (d) => delete d.output, /output: got undefined, expected an object/],
    ['empty input name', (d) => (d.input.name = ''), /input\.name: got "", expected a non-empty string/],
    ['quantity in other units', (d) => (d.output.quantity = 'cm-1'), /output\.quantity: got "cm-1", expected "mu" \(1\/mm\) or "hu"/],
    ['zero scale', (d) => (d.output.scale = 0), /output\.scale: got 0, expected a non-zero factor/],
    ['scale as text', (d) => (d.input.scale = '1'), /input\.scale: got "1", expected a finite number/],
    ['size not whole', (d) => (d.input.size = 255.5), /input\.size: got 255\.5, expected a whole number of pixels from 8 to 4096/],
    ['size too large', (d) => (d.input.size = 5000), /input\.size: got 5000/],
    ['negative pixel', (d) => (d.input.pixel = -1), /input\.pixel: got -1, expected a pixel size in mm/],
    ['pixel without size', (d) => delete d.input.size, /input\.pixel: given without input\.size/],
    ['missing from', (d) => delete d.input.from, /input\.from: got undefined, expected \{"method"/],
    ['prior as input method', (d) => (d.input.from.method = 'prior'), /input\.from\.method: got "prior", expected a method that makes an image from the scan alone/],
    ['size on the output', (d) => (d.output.size = 256), /output: unknown field "size"/],
  ])('refuses %s', (_, edit, message) => {
    expect(() => validateModelInfo(withChange(edit))).toThrow(message);
  });

  it('refuses what is not an object', () => {
    expect(() => validateModelInfo([1, 2])).toThrow(/model description: got \[1,2\], expected a JSON object/);
    expect(() => validateModelInfo(null)).toThrow(/expected a JSON object/);
  });

  it('the input recipe: the method and grid of the description, checked by the recipe validator', () => {
    const info = validateModelInfo(example());
    const r = networkInputRecipe(info, { nx: 256, ny: 256, dx: 1, dy: 1, cx: 0, cy: 0 });
    expect(r.method).toBe('fbp');
    expect(r.grid).toEqual({ size: 256, pixel: 1 });
    expect(() => networkInputRecipe(validateModelInfo(withChange((d) => (d.input.from.method = 'art'))))).toThrow(/model description input\.from: method: got "art", expected one of/);
  });

  it('an extension this build cannot run is refused, not silently dropped', () => {
    const info = validateModelInfo(withChange((d) => (d.input.from.extend = 'water')));
    const recipe = (() => {
      try {
        return networkInputRecipe(info);
      } catch (err) {
        return err as Error;
      }
    })();
    // Once recipes carry `extend`, the recipe keeps "water"; until then the description is refused.
    if (recipe instanceof Error) expect(recipe.message).toMatch(/input\.from\.extend: got "water", but the recipes of this build have no detector extension/);
    else expect((recipe as unknown as Record<string, unknown>).extend).toBe('water');
  });
});
