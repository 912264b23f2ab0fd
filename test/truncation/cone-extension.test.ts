import { describe, expect, it } from 'vitest';
import { CancelledError } from '../../web/core/errors';
import { coneFovHalfHeight } from '../../web/core/geometry/cone';
import { cropDetector, presetGeometry } from '../../web/core/geometry/presets';
import { validateGeometry } from '../../web/core/geometry/validate';
import { fovRadius } from '../../web/core/geometry/view-vectors';
import { voxelize } from '../../web/core/phantoms/solid';
import { thorax3d, waterCylinder3d } from '../../web/core/phantoms/thorax-3d';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { analyticConeProjections } from '../../web/core/simulate/analytic-cone';
import { planConeExtension } from '../../web/core/truncation/cone-extension';
import { EXTEND_METHODS } from '../../web/core/truncation/extend-methods';
import { coneRowExtension } from '../../web/core/truncation/row-extension';
import { volumeOrigin, type Volume } from '../../web/core/volume';
import { localWorkspace } from '../helpers/engine';

describe('row-wise detector extension of cone-beam scans', () => {
  // A water cylinder 300 mm across and 800 mm long (z-invariant over the cone), seen by a
  // detector whose FOV radius is about 63 mm, with rows of 12 mm reaching 138 mm above and below
  // the orbit plane (rays tilted up to 8.7 degrees). The complete scan comes from a detector 3
  // times wider with the same cells, so the true projections beyond the cut edges are known.
  const nV = 24, nR = 24, nW = 240, nC = 80;
  const wide = validateGeometry({
    kind: 'cone', detector: { shape: 'flat', channels: nW, rows: nR, pitch: [2, 12], offset: [0, 0] },
    sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 0, step: 15, count: nV },
  });
  const { geometry: cut, first } = cropDetector(wide, nC);
  const p = waterCylinder3d(150, 400);

  it('water tails follow the exact projections of a centred water cylinder in every row', async () => {
    const full = await analyticConeProjections(p, wide);
    const data = new Float32Array(nV * nR * nC);
    for (let r = 0; r < nV * nR; r++) data.set(full.subarray(r * nW + first, r * nW + first + nC), r * nC);
    const stages = new Set<string>();
    const plan = await planConeExtension({ geometry: cut, data, muWater: p.muWater }, 'water', { onProgress: (_f, st) => stages.add(st) });
    expect([...stages]).toEqual(['analysing the detector edges']);
    expect(plan.summary).toMatchObject({ rows: nR, truncatedRows: nR, massBasis: 'unavailable', muAssumed: false });
    // Hsieh et al. 2004 (REFERENCES.md [hsieh-2004]): a centred water cylinder is fitted exactly from the
    // edge value and slope; the least-squares slope over the last 6 mm leaves about 2 mm of
    // excess reach (the 2D test allows 3 mm). Every row sees the same cylinder: with each row's
    // fits made with mu times the secant of its tilt the rows agree within 0.04 mm (measured);
    // with plain mu the outer rows would reach 0.75 mm further than the central ones.
    expect(Math.abs(plan.objectRadius - 150)).toBeLessThan(3);
    const radii = Array.from(plan.rowRadius);
    expect(Math.max(...radii) - Math.min(...radii)).toBeLessThan(0.2);

    const ws = await localWorkspace(2);
    const hook = coneRowExtension(plan, nC);
    const nE = plan.left + nC + plan.right;
    const src = ws.alloc('src', data.length);
    const dst = ws.alloc('dst', nV * nR * nE);
    await hook.prepare!(ws);
    await ws.write(src, data);
    await hook.extendRows(ws, src, dst, 0, nV);
    const out = await ws.read(dst);
    // Measured channels are copied; the tails follow the true (analytic) projections: RMS error
    // 1.0% and worst 2.2% of the largest line integral (measured; the bounds below are a
    // regression pin; the worst lies where the fitted chord
    // ends 2 mm beyond the true one).
    let peak = 0, worst = 0, sum = 0, n = 0;
    for (let r = 0; r < nV * nR; r++) {
      for (let j = 0; j < nE; j++) {
        const k = first - plan.left + j; // channel of the wide detector
        if (k < 0 || k >= nW) continue;
        const want = full[r * nW + k], got = out[r * nE + j];
        if (j >= plan.left && j < plan.left + nC) {
          expect(got).toBe(want);
          continue;
        }
        peak = Math.max(peak, want);
        worst = Math.max(worst, Math.abs(got - want));
        sum += (got - want) ** 2;
        n++;
      }
    }
    expect(n).toBeGreaterThan(nV * nR * 150);
    expect(Math.sqrt(sum / n) / peak).toBeLessThan(0.015);
    expect(worst / peak).toBeLessThan(0.03);
  });

  it('can be cancelled while it analyses the rows', async () => {
    const ctl = new AbortController();
    const run = planConeExtension({ geometry: cut, data: new Float32Array(nV * nR * nC).fill(1) }, 'edge', { signal: ctl.signal, onProgress: () => ctl.abort() });
    await expect(run).rejects.toThrow(CancelledError);
  });
});

describe('FDK with truncation correction on the truncated cone-beam demo', () => {
  // The 'demo-cone' C-arm scan (FOV radius 118 mm of a 340 mm wide thorax), binned to 4 mm
  // cells and 2-degree steps to keep the test small; exact projections, no noise.
  const demo = presetGeometry('demo-cone')!;
  const g = validateGeometry({ ...demo, detector: { ...demo.detector, channels: 96, rows: 72, pitch: [4, 4] }, anglesDeg: { start: 0, step: 2, count: 100 } });
  const p = thorax3d();
  const scanPromise = analyticConeProjections(p, g).then((data) => ({ geometry: g, data, muWater: p.muWater }));
  const fov = fovRadius(g), h0 = coneFovHalfHeight(g), hRim = coneFovHalfHeight(g, fov);
  // The measured height falls linearly with the distance from the axis on a circular orbit
  // (h0 (R - rho) / R; geometry/cone.ts coneFovHalfHeight).
  const heightAt = (rho: number) => h0 + ((hRim - h0) * rho) / fov;

  /**
   * RMSE (HU) inside the FOV: over the voxels every view measures (within the FOV radius and the
   * cone's height there); outside: over the object's voxels beyond the FOV radius in that height.
   */
  function rmseHu(v: Volume, truth: Float32Array, region: 'inside' | 'outside'): number {
    const grid = v.grid;
    const { x0, y0, z0 } = volumeOrigin(grid);
    let s = 0, n = 0;
    for (let k = 0; k < grid.nz; k++) {
      for (let j = 0; j < grid.ny; j++) {
        for (let i = 0; i < grid.nx; i++) {
          const rho = Math.hypot(x0 + i * grid.dx, y0 + j * grid.dy);
          const at = (k * grid.ny + j) * grid.nx + i;
          const keep = region === 'inside' ? rho <= fov : rho > fov && truth[at] > 0.05 * p.muWater;
          if (!keep || Math.abs(z0 + k * grid.dz) > heightAt(Math.min(rho, fov))) continue;
          const d = ((v.data[at] - truth[at]) * 1000) / p.muWater;
          s += d * d;
          n++;
        }
      }
    }
    expect(n).toBeGreaterThan(5000);
    return Math.sqrt(s / n);
  }

  it('water extension halves the inside-FOV RMSE against none, every extension lowers it inside and beyond the FOV', async () => {
    const scan = await scanPromise;
    const ws = await localWorkspace(2);
    const rmse: Record<string, number> = {}, outside: Record<string, number> = {};
    let truth: Float32Array | undefined;
    for (const extend of EXTEND_METHODS) {
      const r = await runRecipe(ws, scan, validateRecipe({ method: 'fbp', filter: 'shepp-logan', extend, grid: { size: 96, pixel: 6 }, volume: { slices: 34, spacing: 6 } }));
      truth ??= voxelize(p, r.volume!.grid, 2);
      rmse[extend] = rmseHu(r.volume!, truth, 'inside');
      outside[extend] = rmseHu(r.volume!, truth, 'outside');
    }
    // The project's acceptance bar, against the analytic truth: water extension lowers the inside-FOV RMSE by at least half against none.
    // Measured: none 637 HU; edge 124, mirror 85, water 110, cosine 81 HU. Beyond the FOV the
    // extended volume follows the body better too (none 847 HU; extensions 507 to 550 HU).
    expect(rmse.water).toBeLessThan(0.5 * rmse.none);
    for (const m of EXTEND_METHODS.filter((x) => x !== 'none')) {
      expect(rmse[m], m).toBeLessThan(0.5 * rmse.none);
      expect(outside[m], m).toBeLessThan(0.75 * outside.none);
    }
  });

  it('the default volume covers the estimated object, beyond the FOV', async () => {
    const scan = await scanPromise;
    const ws = await localWorkspace(2);
    const r = await runRecipe(ws, scan, validateRecipe({ method: 'fbp', extend: 'water', filter: 'hann' }));
    const v = r.volume!;
    const half = (v.grid.nx * v.grid.dx) / 2;
    // The body is 170 mm wide on each side; the FOV radius is 118 mm.
    expect(half).toBeGreaterThan(170);
    expect(v.grid.nx).toBe(256);
    expect(r.report.extension).toMatchObject({ method: 'water', rows: 72 });
    expect(v.fovRadius).toBeCloseTo(fov, 6);
    expect(v.fovHalfHeight).toBeCloseTo(h0, 6);
  });
});
