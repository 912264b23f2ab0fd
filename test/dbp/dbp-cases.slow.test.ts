// DBP at full size on the severe-truncation cases (web/cli/bench/accuracy/cases.ts: two real CT
// slices and the thorax phantom, C-arm-like fan geometry, FOV radius 0.42 of the body's
// half-width), with the known 20 mm disk and the outline ellipse each case carries. Outside check:
// the error against the object itself inside the measured field of view, compared with FBP with
// water extension on the same scan and grid. The bounds are regression pins set just above the
// figures measured when they were written (bench section dbp reports them).
import { describe, expect, it } from 'vitest';
import { realSliceCase, thoraxCase, type SevereCase } from '../../web/cli/bench/accuracy/cases';
import { compareImages } from '../../web/core/compare';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { localWorkspace } from '../helpers/engine';

async function figures(c: SevereCase) {
  const ws = await localWorkspace(2);
  const grid = { size: c.truth.grid.nx, pixel: c.truth.grid.dx };
  const inside = async (fields: Record<string, unknown>) =>
    compareImages((await runRecipe(ws, c.scan, validateRecipe({ ...fields, grid }))).image, c.truth, c.fovRadius).regions.insideFov!.rmse;
  return {
    water: await inside({ method: 'fbp', extend: 'water' }),
    dbp: await inside({ method: 'dbp', knowledge: { known: [c.known], outline: c.outline } }),
  };
}

describe('DBP on the severe-truncation cases (known disk and outline)', () => {
  it('thorax phantom with arms: well below FBP with water extension', async () => {
    const f = await figures(await thoraxCase());
    expect(f.dbp).toBeLessThan(0.6 * f.water); // measured 47.8 against 109.3 HU
    expect(f.dbp).toBeLessThan(55); // regression pin
  }, 600_000);
  it('real CT thorax slice: well below FBP with water extension', async () => {
    const ws = await localWorkspace(1);
    const f = await figures(await realSliceCase(ws, 'nema-ct1-thorax.nrrd'));
    expect(f.dbp).toBeLessThan(0.6 * f.water); // measured 55.0 against 151.3 HU
    expect(f.dbp).toBeLessThan(60); // regression pin
  }, 600_000);
  it('real CT head slice: as good as FBP with water extension', async () => {
    const ws = await localWorkspace(1);
    const f = await figures(await realSliceCase(ws, 'pydicom-head.nrrd'));
    expect(f.dbp).toBeLessThan(1.1 * f.water); // measured 24.0 against 24.7 HU
  }, 600_000);
});
