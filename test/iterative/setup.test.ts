// Set-up of iterative reconstruction: ordered subsets, permuted geometry, extended detector.
import { describe, expect, it } from 'vitest';
import { extendToCover, detectorReach, maskRadius } from '../../web/core/iterative/extension';
import { permuteGeometry, permuteRows, planSubsets, subsetOrder, unpermute } from '../../web/core/iterative/subsets';
import { supportMask } from '../../web/core/iterative/problem';
import { firstChannelU, kernelKind, rayAt, viewVectors } from '../../web/core/geometry/view-vectors';
import { squareGrid } from '../../web/core/image';
import { fanCurved, fanFlat, parallel } from '../helpers/geometries';

describe('ordered subsets', () => {
  it('bit-reversed subset order visits every subset once, far apart', () => {
    expect(subsetOrder(8)).toEqual([0, 4, 2, 6, 1, 5, 3, 7]);
    const o = subsetOrder(20);
    expect([...o].sort((a, b) => a - b)).toEqual(Array.from({ length: 20 }, (_, i) => i));
    expect(o.slice(0, 3)).toEqual([0, 16, 8]);
  });

  it('interleaved subsets are contiguous ranges of a permutation of the views', () => {
    const plan = planSubsets(23, 5);
    expect([...plan.permutation].sort((a, b) => a - b)).toEqual(Array.from({ length: 23 }, (_, i) => i));
    expect(plan.starts[0]).toBe(0);
    expect(plan.starts[5]).toBe(23);
    for (let q = 0; q < 5; q++) {
      const views = Array.from(plan.permutation.subarray(plan.starts[q], plan.starts[q + 1]));
      // Views of one subset are S apart: they span the whole angular range.
      for (let i = 1; i < views.length; i++) expect(views[i] - views[i - 1]).toBe(5);
      expect(views.length === 4 || views.length === 5).toBe(true);
    }
    expect(() => planSubsets(10, 11)).toThrow(/subsets/);
  });

  it('the permuted geometry describes the permuted views; rows and per-view values follow', () => {
    const g = fanFlat(40, 1, 12);
    const plan = planSubsets(12, 4);
    const pv = viewVectors(permuteGeometry(g, plan.permutation));
    const v = viewVectors(g);
    plan.permutation.forEach((orig, q) => {
      for (let c = 0; c < 12; c++) expect(pv[q * 12 + c]).toBeCloseTo(v[orig * 12 + c], 4);
    });
    const data = Float32Array.from({ length: 12 * 3 }, (_, i) => i);
    const rows = permuteRows(data, 3, plan.permutation);
    expect(rows[3]).toBe(data[plan.permutation[1] * 3]);
    expect(unpermute(Array.from(plan.permutation, (orig) => orig * 10), plan.permutation)).toEqual(Array.from({ length: 12 }, (_, i) => i * 10));
  });
});

describe('extended detector', () => {
  it.each([
    ['parallel', parallel(64, 1, 8)],
    ['fan flat', fanFlat(64, 1, 8)],
    ['fan curved', fanCurved(64, 1, 8)],
  ])('%s: the ray at the reach passes at the asked radius from the isocentre', (_, g) => {
    const r = 120;
    const u = detectorReach(g, r);
    const ray = rayAt(viewVectors(g), 3, kernelKind(g), u);
    // Distance of a line from the origin: |p x d| for a unit direction d.
    expect(Math.abs(ray.px * ray.dy - ray.py * ray.dx)).toBeCloseTo(r, 4); // view tables are f32
  });

  it('extends both sides just enough to cover the support, keeping the measured channels', () => {
    const g = fanFlat(64, 1, 8);
    const grid = squareGrid(100, 2);
    const support = supportMask(grid, 'disk');
    const r = maskRadius(grid, support);
    expect(r).toBeGreaterThan(99);
    expect(r).toBeLessThan(101.5);
    const e = extendToCover(g, r);
    const d = e.geometry.detector;
    expect(d.channels).toBe(64 + e.left + e.right);
    const u0 = firstChannelU(e.geometry);
    // Measured channel 0 keeps its position; the extended ends reach beyond the support.
    expect(u0 + e.left * d.pitch[0]).toBeCloseTo(firstChannelU(g), 9);
    const reach = detectorReach(g, r);
    expect(u0).toBeLessThanOrEqual(-reach);
    expect(u0 + (d.channels - 1) * d.pitch[0]).toBeGreaterThanOrEqual(reach);
    expect(u0 + d.pitch[0] * 2).toBeGreaterThan(-reach); // not more than one spare channel
    expect(extendToCover(g, 5)).toMatchObject({ left: 0, right: 0 });
  });

  it('rejects a support that reaches the source, and absurd detectors', () => {
    expect(() => detectorReach(fanFlat(64, 1, 8), 600)).toThrow(/source distance 500 mm/);
    expect(() => extendToCover(parallel(64, 0.001, 8), 200)).toThrow(/extended detector of \d+ channels/);
  });
});
