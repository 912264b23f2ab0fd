// Shared by the FBP tests (fbp.test.ts, fbp.slow.test.ts): the detector geometries every FBP
// check runs on, and the Shepp-Logan check of each region against the phantom table.
import { expect } from 'vitest';
import type { Geometry } from '../../web/core/geometry/types';
import { validateGeometry } from '../../web/core/geometry/validate';
import { gridOrigin, squareGrid, type ImageGrid } from '../../web/core/image';
import { valueAt, type EllipsePhantom } from '../../web/core/phantoms/ellipse';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { fbp2d } from '../../web/core/recon/fbp';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { localWorkspace } from './engine';

export function fan(shape: 'flat' | 'curved', spanDeg: number, views: number): Geometry {
  return validateGeometry({
    kind: 'fan',
    detector: { shape, channels: 401, rows: 1, pitch: [0.9, 1], offset: [0, 0] },
    sourceIsocenter: 500,
    sourceDetector: 900,
    anglesDeg: { start: 10, step: spanDeg / views, count: views },
  });
}

export const geometries: Array<[string, Geometry]> = [
  ['parallel 180 degrees', validateGeometry({ kind: 'parallel', detector: { channels: 401, pitch: 0.5 }, anglesDeg: { start: 0, step: 0.5, count: 360 } })],
  ['fan flat full scan', fan('flat', 360, 720)],
  ['fan curved full scan', fan('curved', 360, 720)],
  // Short scan: 180 degrees + fan angle (2 x 11.3) + margin, Parker-weighted.
  ['fan flat short scan + Parker', fan('flat', 206, 412)],
  ['fan curved short scan + Parker', fan('curved', 206, 412)],
];

/**
 * The region of each pixel: the index of its innermost (last listed) ellipse when every point on
 * a ring of 16 points `margin` mm around it lies in the same ellipses, else -1.
 */
export function regionLabels(p: EllipsePhantom, grid: ImageGrid, margin: number): Int32Array {
  const { x0, y0 } = gridOrigin(grid);
  const labels = new Int32Array(grid.nx * grid.ny).fill(-1);
  const ring = Array.from({ length: 16 }, (_, a) => [margin * Math.cos((a * Math.PI) / 8), margin * Math.sin((a * Math.PI) / 8)]);
  const shapes = p.ellipses.map((e) => {
    const phi = (e.phiDeg * Math.PI) / 180;
    return { e, c: Math.cos(phi), s: Math.sin(phi), reach: margin / Math.min(e.a, e.b) };
  });
  // Normalised radius of (x, y) in ellipse k: below 1 inside. A ring point moves it by at most
  // `reach`, so only ellipses whose boundary is that close need the ring checked.
  const radius = (k: number, x: number, y: number) => {
    const { e, c, s } = shapes[k];
    const rx = x - e.cx, ry = y - e.cy;
    return Math.hypot((c * rx + s * ry) / e.a, (-s * rx + c * ry) / e.b);
  };
  for (let j = 0; j < grid.ny; j++) {
    for (let i = 0; i < grid.nx; i++) {
      const x = x0 + i * grid.dx, y = y0 + j * grid.dy;
      let ok = true, innermost = -1;
      for (let k = 0; ok && k < shapes.length; k++) {
        const r = radius(k, x, y);
        if (r <= 1) innermost = k;
        if (Math.abs(r - 1) <= shapes[k].reach) ok = ring.every(([dx, dy]) => radius(k, x + dx, y + dy) <= 1 === r <= 1);
      }
      if (ok) labels[j * grid.nx + i] = innermost;
    }
  }
  return labels;
}

/** Mean of the reconstruction and of the true values over the pixels of region `which` (regionLabels). */
export function regionMeans(p: EllipsePhantom, grid: ImageGrid, img: Float32Array, labels: Int32Array, which: number) {
  const { x0, y0 } = gridOrigin(grid);
  let sumRec = 0, sumTrue = 0, n = 0;
  for (let k = 0; k < labels.length; k++) {
    if (labels[k] !== which) continue;
    sumRec += img[k];
    sumTrue += valueAt(p, x0 + (k % grid.nx) * grid.dx, y0 + Math.floor(k / grid.nx) * grid.dy);
    n++;
  }
  return { rec: sumRec / n, truth: sumTrue / n, n };
}

/**
 * FBP (ramp) of exact Shepp-Logan projections on a 400 x 400 grid of 0.5 mm: the mean in each
 * ellipse's interior region within 2% of the table value (Shepp & Logan 1974, Table 1 for the
 * original; Toft 1996, Table B.3 for the higher-contrast variant).
 */
export async function expectSheppLoganRegions(g: Geometry, variant: 'original' | 'modified'): Promise<void> {
  const ws = await localWorkspace(2);
  const p = sheppLogan(variant);
  const grid = squareGrid(400, 0.5);
  const sino = analyticSinogram(p, g);
  const { image, warnings } = await fbp2d(ws, { geometry: g, data: sino }, { grid, filter: 'ramp' });
  expect(warnings).toEqual([]);
  let regions = 0;
  // A region whose table value is 0 (the modified phantom's ventricles) is held to 2% of the
  // brain value around it.
  const labels = regionLabels(p, grid, 1.0);
  const brain = Math.abs(regionMeans(p, grid, image.data, labels, 1).truth);
  for (let e = 0; e < p.ellipses.length; e++) {
    const m = regionMeans(p, grid, image.data, labels, e);
    if (m.n < 8) continue; // the skull ring is thinner than the margin on both sides
    regions++;
    expect(Math.abs(m.rec - m.truth) / Math.max(Math.abs(m.truth), brain), `ellipse ${e}: ${m.rec} vs ${m.truth}`).toBeLessThan(0.02);
  }
  expect(regions).toBe(10);
}
