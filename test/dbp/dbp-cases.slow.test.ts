// DBP at full size on the accuracy bench's cases (web/cli/bench/accuracy/cases.ts: two real CT
// slices and the thorax phantom with arms in a C-arm-like fan whose field of view has a radius of
// 0.42 of the body's half-width, and the page's demo scan), run as the bench runs its DBP row:
// the default grid, the case's known 20 mm disk, with and without the outline ellipse. Outside
// check: the error against the object itself inside the measured field of view, beside FBP
// fitted to the same knowledge (the best FBP correction for it) and FBP with water extension on
// the same scan. Bounds marked "regression pin" are set just above the figures measured when
// they were written (README "Choosing a method" shows them).
import { describe, expect, it } from 'vitest';
import { demoCase, realSliceCase, thoraxCase, type SevereCase } from '../../web/cli/bench/accuracy/cases';
import { ACCURACY_ROWS, knowledgeFor, type KnowledgeKind } from '../../web/cli/bench/accuracy/rows';
import { compareImages } from '../../web/core/compare';
import type { Workspace } from '../../web/core/engine/workspace';
import { fbpRecipeForKnowledge } from '../../web/core/recipe/knowledge-recipe';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { localWorkspace } from '../helpers/engine';

const dbpRow = ACCURACY_ROWS.find((r) => r.label === 'DBP')!;

async function inside(ws: Workspace, c: SevereCase, recipe: unknown): Promise<number> {
  const r = await runRecipe(ws, c.scan, validateRecipe(recipe));
  return compareImages(r.image, c.truth, c.fovRadius).regions.insideFov!.rmse;
}

/** DBP and FBP for the same knowledge, and FBP with water extension (nothing known). */
async function figures(ws: Workspace, c: SevereCase, kind: KnowledgeKind) {
  const k = knowledgeFor(c, kind);
  return {
    dbp: await inside(ws, c, dbpRow.recipe(k)),
    fbpKnown: await inside(ws, c, fbpRecipeForKnowledge(k)),
    water: await inside(ws, c, { method: 'fbp', extend: 'water' }),
  };
}

describe('DBP on the accuracy cases (known disk; known disk and outline)', () => {
  it('real CT head slice: DBP with the known disk within 10% of FBP fitted to it, or better', async () => {
    const ws = await localWorkspace(2);
    const c = await realSliceCase(ws, 'pydicom-head.nrrd');
    const region = await figures(ws, c, 'region');
    expect(region.dbp).toBeLessThan(1.1 * region.fbpKnown); // measured 19.6 against 31.9 HU
    const both = await figures(ws, c, 'both');
    expect(both.dbp).toBeLessThan(both.fbpKnown); // measured 18.3 against 31.9 HU
  }, 600_000);
  it('thorax phantom with arms: DBP below FBP fitted to the same knowledge, with the disk alone and with the outline', async () => {
    const ws = await localWorkspace(2);
    const c = await thoraxCase();
    const both = await figures(ws, c, 'both');
    expect(both.dbp).toBeLessThan(both.fbpKnown); // measured 41.8 against 53.1 HU
    const region = await figures(ws, c, 'region');
    expect(region.dbp).toBeLessThan(region.fbpKnown); // measured 37.4 against 53.1 HU
  }, 600_000);
  it('real CT thorax slice: DBP well below FBP with water extension (FBP fitted to the disk does better)', async () => {
    const ws = await localWorkspace(2);
    const c = await realSliceCase(ws, 'nema-ct1-thorax.nrrd');
    const region = await figures(ws, c, 'region');
    expect(region.dbp).toBeLessThan(0.4 * region.water); // measured 48.4 against 151 HU
    expect(region.dbp).toBeLessThan(52); // regression pin (FBP fitted to the disk: 29 HU)
    expect(await inside(ws, c, dbpRow.recipe(knowledgeFor(c, 'both')))).toBeLessThan(57); // regression pin, measured 53.5 HU
  }, 600_000);
  it('the demo scan: DBP with the known disk within 10% of FBP fitted to it', async () => {
    const ws = await localWorkspace(2);
    const c = await demoCase();
    const region = await figures(ws, c, 'region');
    expect(region.dbp).toBeLessThan(1.1 * region.fbpKnown); // measured 49.1 against 49.0 HU
    expect(region.dbp).toBeLessThan(0.5 * region.water); // measured 49.1 against 105 HU
  }, 600_000);
});
