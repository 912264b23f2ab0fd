import { describe, expect, it } from 'vitest';
import { compareImages } from '../../web/core/compare';
import { cupping } from '../../web/core/cupping';
import { dataResidual } from '../../web/core/data-residual';
import { validateGeometry } from '../../web/core/geometry/validate';
import { gridOrigin, squareGrid, type Image2D } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { localWorkspace } from '../helpers/engine';

const grid = squareGrid(200, 1);
const mu = 0.02;

/** An image of mu (1 + k (r / R)^2) inside radius 90 mm: a known cup (k < 0) or cap. */
function profileImage(k: number, R: number): Image2D {
  const { x0, y0 } = gridOrigin(grid);
  const data = new Float32Array(200 * 200);
  for (let j = 0; j < 200; j++) for (let i = 0; i < 200; i++) {
    const r = Math.hypot(x0 + i, y0 + j);
    data[j * 200 + i] = r < 90 ? mu * (1 + k * (r / R) ** 2) : 0;
  }
  return { grid, data, quantity: 'mu', muWater: mu };
}

describe('cupping measure', () => {
  it('is 1 for a flat object and matches the disc / annulus means of a quadratic profile', () => {
    const R = 80;
    expect(cupping(profileImage(0, R), R)!.ratio).toBeCloseTo(1, 12);
    // Mean of (r/R)^2 over a disc of radius aR is a^2/2, over an annulus [aR, bR] (a^2 + b^2)/2
    // (elementary integrals): centre 1 + 0.3 * 0.25^2 / 2, rim 1 + 0.3 * (0.8^2 + 0.95^2) / 2.
    const c = cupping(profileImage(0.3, R), R, profileImage(0, R).data)!;
    const expected = (1 + (0.3 * (0.8 ** 2 + 0.95 ** 2)) / 2) / (1 + (0.3 * 0.25 ** 2) / 2);
    expect(Math.abs(c.ratio / expected - 1)).toBeLessThan(5e-3);
    expect(c.referenceRatio).toBeCloseTo(1, 12);
    expect(c.excess).toBeCloseTo(c.ratio - 1, 12);
    expect(c.profile.image).toHaveLength(10);
  });

  it('is reported by compareImages inside the FOV, against the reference profile', () => {
    const R = 80;
    const c = compareImages(profileImage(0.3, R), profileImage(0.3, R), R);
    expect(c.cupping!.excess).toBeCloseTo(0, 12);
    expect(c.regions.insideFov!.rmse).toBe(0);
    expect(c.regions.insideFov!.ssim).toBeCloseTo(1, 12);
  });
});

describe('data residual', () => {
  // The re-projection of the true image onto exact data differs only by discretisation; an
  // image 10% too bright leaves a residual of about 10% of the data, with a positive bias.
  it('is small for the truth and 10% for a 10% error', async () => {
    const g = validateGeometry({ kind: 'parallel', detector: { channels: 200, pitch: 1 }, anglesDeg: { start: 0, step: 2, count: 90 } });
    const p = sheppLogan('modified', 80, mu);
    const scan = { geometry: g, data: analyticSinogram(p, g, 4) };
    const truth: Image2D = { grid, data: rasterize(p, grid, 4), quantity: 'mu' };
    const ws = await localWorkspace(2);
    const exact = await dataResidual(ws, truth, scan);
    expect(exact.rays).toBe(200 * 90);
    expect(exact.relative).toBeLessThan(0.02);
    const bright = await dataResidual(ws, { ...truth, data: truth.data.map((x) => 1.1 * x) }, scan);
    expect(Math.abs(bright.relative - 0.1)).toBeLessThan(0.02);
    expect(bright.bias).toBeGreaterThan(0);
    expect(bright.perViewRms).toHaveLength(90);
  });
});

describe('recipe extend field', () => {
  it('accepts the extension methods and names a bad one', () => {
    expect(validateRecipe({ method: 'fbp', extend: 'water' }).extend).toBe('water');
    expect(validateRecipe({ method: 'fbp' }).extend).toBe('none');
    expect(() => validateRecipe({ method: 'fbp', extend: 'linear' })).toThrow(/recipe extend: got "linear", expected one of none, edge, mirror, water, cosine/);
  });
});
