// The words a result carries out of Rimfill (DICOM series description and derivation): the
// recipe label, and the knowledge it used, in short and spelt out.
import { describe, expect, it } from 'vitest';
import { describeResult } from '../../web/core/recipe/describe-result';
import { validateRecipe } from '../../web/core/recipe/recipe';

describe('result words', () => {
  it('a recipe without knowledge: its label', () => {
    const r = validateRecipe({ method: 'fbp', filter: 'hann', extend: 'water', grid: { size: 256, pixel: 2 } }) as unknown as Record<string, unknown>;
    expect(describeResult(r)).toEqual({ label: 'FBP, water cylinder, hann, 256 px × 2 mm', detail: 'FBP, water cylinder, hann, 256 px × 2 mm' });
  });

  it('known regions and the outline: named in the label, spelt out in the detail', () => {
    const r = validateRecipe({
      method: 'fbp', knowledge: { known: [{ shape: 'circle', x: 10, y: -20, r: 8, hu: -1000 }], outline: { shape: 'ellipse', cx: 0, cy: 0, a: 170, b: 120 } },
    }) as unknown as Record<string, unknown>;
    const w = describeResult(r);
    expect(w.label).toMatch(/^FBP, no correction, 1 known region \+ outline, ramp, /);
    expect(w.detail).toBe(`${w.label}; knowledge: known region 1 (circle at 10, -20 mm, r 8 mm, -1000 HU); outline (ellipse at 0, 0 mm, semi-axes 170 x 120 mm)`);
  });
});
