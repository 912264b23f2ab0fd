// Prior-guided data-consistent reconstruction on the thorax demo phantom truncated to about 60%
// of its width (preset "demo", 345 of 1100 channels: FOV radius 102 mm, body 340 mm wide).
// The prior is "correct outside the FOV" (the phantom there) and wrong inside (water). The
// method must recover the outside region (from the prior's projections on the unmeasured
// channels) far better than FBP of the truncated scan, and inside the FOV the measured data
// must overrule the prior: a false bright disk or added noise in the prior must not survive.
// Sources: the method as summarized in REFERENCES.md [dc-prior]; thorax attenuation from NIST SRD 126 (materials.ts).
import { beforeAll, describe, expect, it } from 'vitest';
import { rmse } from '../../web/core/metrics';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { EXTEND_METHODS } from '../../web/core/truncation/extend-methods';
import { N, phantom, PIXEL, priorCase, truth, VIEWS, type PriorCase } from '../helpers/prior-case';

const hu = (mu: number) => (1000 * mu) / phantom.muWater;
let ws: PriorCase['ws'], scan: PriorCase['scan'], fov: PriorCase['fov'], insideFov: PriorCase['insideFov'], outsideFov: PriorCase['outsideFov'], basePrior: PriorCase['basePrior'], base: PriorCase['base'];

beforeAll(async () => {
  ({ ws, scan, fov, insideFov, outsideFov, basePrior, base } = await priorCase());
});

describe('prior-guided data-consistent reconstruction', () => {
  it('recovers the region outside the FOV at least 3x better than the best extrapolation + FBP', async () => {
    expect(fov).toBeGreaterThan(95);
    expect(fov).toBeLessThan(110);
    let best = { rmse: Infinity, recipe: '' };
    for (const extend of EXTEND_METHODS) {
      for (const filter of ['shepp-logan', 'hann'] as const) {
        const f = await runRecipe(ws, scan, validateRecipe({ method: 'fbp', extend, filter, grid: { size: N, pixel: PIXEL } }));
        const e = rmse(f.image.data, truth, outsideFov);
        if (e < best.rmse) best = { rmse: e, recipe: `${extend}, ${filter}` };
      }
    }
    const outside = rmse(base.image.data, truth, outsideFov);
    expect(outside * 3, `best FBP: ${best.recipe}, ${hu(best.rmse).toFixed(0)} HU`).toBeLessThan(best.rmse);
    // Regression pin (60 HU) over the measured 19 HU outside; the best extrapolation + FBP
    // (cosine taper, Hann) gives 340 HU.
    expect(hu(outside)).toBeLessThan(60);
    // Inside, the data replaced the prior's water by the thorax.
    const inside = rmse(base.image.data, truth, insideFov);
    expect(inside).toBeLessThan(0.2 * rmse(basePrior, truth, insideFov));
  });

  it('reports residual per view and the departure from the prior inside and outside the FOV', () => {
    const rep = base.report as {
      residual: { perViewRms: number[]; finalRelative: number };
      prior: { departure: { insideFov: { rms: number; rmsHu: number; pixels: number }; outsideFov: { rms: number; pixels: number } }; unmeasuredPerViewRms: number[] };
      extension: { left: number; right: number; channels: number };
      history: { residual: number[]; tv: number[] };
    };
    expect(rep.residual.perViewRms).toHaveLength(VIEWS);
    expect(rep.prior.unmeasuredPerViewRms).toHaveLength(VIEWS);
    expect(rep.residual.perViewRms.every((v) => Number.isFinite(v) && v >= 0)).toBe(true);
    // The prior was water inside the FOV: the result departs from it there by about the
    // thorax's own contrast, and little outside where the prior was right.
    const d = rep.prior.departure;
    const expectedInside = rmse(truth, basePrior, insideFov);
    expect(d.insideFov.rms).toBeGreaterThan(0.7 * expectedInside);
    expect(d.insideFov.rms).toBeLessThan(1.3 * expectedInside);
    expect(d.outsideFov.rms).toBeLessThan(0.1 * d.insideFov.rms);
    expect(d.insideFov.rmsHu).toBeCloseTo(hu(d.insideFov.rms), 6);
    expect(d.insideFov.pixels + d.outsideFov.pixels).toBeGreaterThan(0.75 * N * N);
    expect(rep.extension.left).toBeGreaterThan(300);
    expect(rep.extension.channels).toBe(345 + rep.extension.left + rep.extension.right);
    expect(rep.history.residual).toHaveLength(20);
  });
});
