// Negative attenuation in a prior: no material has it (noise or artefacts). A prior the user gives
// with such pixels gets a warning that says what they mean and what the method does with them;
// the prior the method makes itself (FBP of the truncated scan) has a few from noise and streaks,
// which go to the report only (test/iterative/volume.test.ts).
import { describe, expect, it } from 'vitest';
import { squareGrid } from '../../web/core/image';
import { negativePriorWarning, priorOnGrid } from '../../web/core/iterative/prior';

describe('negative values in a prior', () => {
  const grid = squareGrid(4, 1);
  const support = new Uint8Array(16).fill(1);

  it('are counted with the lowest value, not silently clipped in the prior', () => {
    const data = new Float32Array(16).fill(0.02);
    data[3] = -0.004;
    data[7] = -1e-8; // float rounding of zero: not counted
    const p = priorOnGrid({ grid, data, quantity: 'mu' }, grid, support);
    expect(p.negative).toEqual({ count: 1, lowest: expect.closeTo(-0.004, 9), what: 'pixels' });
    expect(p.data[3]).toBeCloseTo(-0.004, 9);
    expect(priorOnGrid({ grid, data: new Float32Array(16).fill(0.02), quantity: 'mu' }, grid, support).negative).toBeUndefined();
  });

  it('are explained in the warning, with what the method does with them', () => {
    expect(negativePriorWarning({ count: 5, lowest: -0.0042, what: 'pixels' }, true))
      .toBe('prior: 5 pixels have negative attenuation (lowest -0.00420 /mm), which no material has: noise or artefacts in the prior image. They are kept in its projections beyond the detector and set to 0 in the result');
    expect(negativePriorWarning({ count: 2, lowest: -0.01, what: 'voxels' }, false)).toMatch(/kept in its projections beyond the detector$/);
  });
});
