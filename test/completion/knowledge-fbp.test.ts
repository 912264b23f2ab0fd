// FBP with knowledge end to end, small and quick (180 views, 256 x 256 grids): the real CT
// thorax slice (REFERENCES.md [nema-ct1]) and the thorax phantom with arms, each scanned by a
// C-arm-like fan whose field of view has a radius of 0.42 of the body's half-width. The figures
// at full size are in knowledge-fbp.slow.test.ts and `rimfill bench --only accuracy`.
import { beforeAll, describe, expect, it } from 'vitest';
import { realSliceCase, thoraxCase, type SevereCase } from '../../web/cli/bench/accuracy/cases';
import { compareImages } from '../../web/core/compare';
import { InputError } from '../../web/core/errors';
import { fbpRecipeForKnowledge } from '../../web/core/recipe/knowledge-recipe';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import type { KnowledgeReport } from '../../web/core/recipe/knowledge-report';
import { localWorkspace } from '../helpers/engine';

const insideRmse = async (c: SevereCase, recipe: unknown) => {
  const ws = await localWorkspace(2);
  const r = await runRecipe(ws, c.scan, validateRecipe(recipe));
  return { rmse: compareImages(r.image, c.truth, c.fovRadius).regions.insideFov!.rmse, report: r.report.knowledge as KnowledgeReport, warnings: r.warnings };
};

describe('FBP with knowledge on the real CT thorax slice (NEMA WG-04 CT1)', () => {
  let c: SevereCase;
  let water: { rmse: number };
  const grid = { size: 256, pixel: 1.9 };
  beforeAll(async () => {
    c = await realSliceCase(await localWorkspace(2), 'nema-ct1-thorax.nrrd', { views: 180 });
    water = await insideRmse(c, { method: 'fbp', extend: 'water', grid });
  });

  it('one known 20 mm disc: the disc reads its value, the error inside the field drops below a third of FBP + water, the residual does not grow', async () => {
    const known = await insideRmse(c, { method: 'fbp', extend: 'water', grid, knowledge: { known: [c.known] } });
    const r = known.report.regions[0];
    expect(r.knownHu).toBe(c.known.hu);
    expect(Math.abs(r.afterHu - r.knownHu)).toBeLessThan(2);
    // The base extension misses the disc by far more (the smooth offset of the interior problem).
    expect(Math.abs(r.beforeHu - r.knownHu)).toBeGreaterThan(50);
    // Regression pins (this code's figures at this size: FBP + water about 150 HU, with the
    // disc about 30 HU); the outside check is the truth image itself.
    expect(known.rmse).toBeLessThan(water.rmse / 3);
    expect(known.rmse).toBeLessThan(45);
    expect(known.report.residual.after.rms).toBeLessThanOrEqual(known.report.residual.before.rms);
    expect(known.report.completion.momentsFrom).toBe('known regions');
    const completion = known.report.completion;
    expect('consistency' in completion && completion.consistency.completed.order0).toBeLessThan(1e-6);
  });

  it('the outline alone: below half of FBP + water; the report names it', async () => {
    const outline = await insideRmse(c, { method: 'fbp', extend: 'outline', grid, knowledge: { outline: c.outline } });
    expect(outline.rmse).toBeLessThan(water.rmse / 2);
    expect(outline.report.used[0]).toMatch(/^outline \(ellipse/);
    expect(outline.report.completion.momentsFrom).toBe('outline');
    expect(outline.report.suggestedOutline?.option).toMatch(/^ellipse:/);
  });
});

describe('FBP with knowledge on the thorax phantom with arms', () => {
  it('a known disc fits the mass; a deliberately wrong value (+20 HU) moves the result by no more than about that', async () => {
    const c = await thoraxCase({ views: 120, truthPixel: 2 });
    const grid = { size: 256, pixel: 2 };
    const water = await insideRmse(c, { method: 'fbp', extend: 'water', grid });
    const right = await insideRmse(c, { method: 'fbp', extend: 'water', grid, knowledge: { known: [c.known] } });
    const wrong = await insideRmse(c, { method: 'fbp', extend: 'water', grid, knowledge: { known: [{ ...c.known, hu: c.known.hu + 20 }] } });
    expect(right.rmse).toBeLessThan(water.rmse);
    expect(Math.abs(wrong.report.regions[0].afterHu - (c.known.hu + 20))).toBeLessThan(2);
    // A 20 HU error in the region mostly shifts the field by about 20 HU (regression pin: 30).
    expect(wrong.rmse).toBeLessThan(right.rmse + 30);
  });
});

describe('the best FBP correction for the knowledge given', () => {
  it('picks water without knowledge, the fitted tails with regions, outline tails with an outline alone', () => {
    const disc = { shape: 'circle' as const, x: 0, y: 0, r: 10, hu: 40 };
    const outline = { shape: 'ellipse' as const, cx: 0, cy: 0, a: 170, b: 120 };
    expect(fbpRecipeForKnowledge()).toMatchObject({ method: 'fbp', extend: 'water' });
    expect(fbpRecipeForKnowledge().knowledge).toBeUndefined();
    expect(fbpRecipeForKnowledge({ known: [disc] })).toMatchObject({ method: 'fbp', extend: 'water', knowledge: { known: [disc] } });
    expect(fbpRecipeForKnowledge({ outline })).toMatchObject({ method: 'fbp', extend: 'outline', knowledge: { outline } });
    expect(fbpRecipeForKnowledge({ known: [disc], outline }, { grid: { size: 128, pixel: 2 } })).toMatchObject({ extend: 'water', grid: { size: 128, pixel: 2 } });
  });

  it('refuses extend outline without an outline, and knowledge with no extension to adjust', async () => {
    expect(() => validateRecipe({ method: 'fbp', extend: 'outline' })).toThrow(/give the outline too/);
    const c = await thoraxCase({ views: 60, truthPixel: 3 });
    const ws = await localWorkspace(1);
    await expect(runRecipe(ws, c.scan, validateRecipe({ method: 'fbp', grid: { size: 64, pixel: 6 }, knowledge: { known: [c.known] } }))).rejects.toThrow(InputError);
  });
});
