// Setting up an iterative reconstruction: support, extended detector, subsets, the data to fit
// and its weights, all in subset (permuted) view order. Views hold `rows` detector rows
// ([view][row][channel]; 1 row for 2D scans); the detector is extended along its channels.
import { InputError } from '../errors';
import type { Geometry } from '../geometry/types';
import { viewCount } from '../geometry/types';
import type { Image2D } from '../image';
import { resampleBilinear, sameGrid } from '../resample';
import type { Scan } from '../scan';
import { extendToCover, maskRadius, type Extension } from './extension';
import type { SupportShape } from './options';
import { discMask, gridSize, isVolumeGrid, planeGrid, type ReconGrid } from './space';
import { permuteGeometry, permuteRows, planSubsets, type SubsetPlan } from './subsets';

export interface Problem {
  grid: ReconGrid;
  /** 1 inside the support. */
  support: Uint8Array;
  extension: Extension;
  plan: SubsetPlan;
  /** Extended geometry, views in subset order. */
  geometry: Geometry;
  nViews: number;
  /** Detector rows per view (1 for 2D scans). */
  rows: number;
  /** Channels of the extended detector; measured ones are [measured[0], measured[1]). */
  nCh: number;
  measured: [number, number];
  /** Measured data on the extended detector (0 on unmeasured channels), permuted. */
  target: Float32Array;
  /** 1 on measured rays, `unmeasuredWeight` elsewhere. */
  dataWeight: Float32Array;
}

/**
 * Pixels of the support: the disk inscribed in the grid (in every slice of a volume: the
 * cylinder), the whole grid, or where a mask image (any grid, resampled bilinearly) exceeds 0.5.
 */
export function supportMask(grid: ReconGrid, shape: SupportShape, mask?: Image2D): Uint8Array {
  if (shape === 'image') {
    if (!mask) throw new InputError('recipe support: "image" needs a mask image, but none was given');
    if (isVolumeGrid(grid)) throw new InputError('recipe support: "image" (a mask image) works on 2D scans; a volume takes "disk" (a cylinder) or "grid"');
    const onGrid = sameGrid(mask.grid, grid) ? mask.data : resampleBilinear(mask.data, mask.grid, grid);
    const out = onGrid.map((v) => (v > 0.5 ? 1 : 0));
    const inside = out.reduce((s, v) => s + v, 0);
    if (inside === 0) throw new InputError('support mask: no pixel of the reconstruction grid lies inside it (values > 0.5)');
    return Uint8Array.from(out);
  }
  if (shape === 'grid') return new Uint8Array(gridSize(grid)).fill(1);
  const r = Math.min(grid.nx * grid.dx, grid.ny * grid.dy) / 2;
  return discMask({ ...grid, cx: 0, cy: 0 }, r);
}

/** Throws InputError when the scan holds values that are not finite numbers. */
export function checkScanData(scan: Scan): void {
  let bad = 0;
  for (const v of scan.data) if (!Number.isFinite(v)) bad++;
  if (bad > 0) throw new InputError(`scan: ${bad} of ${scan.data.length} projection values are not finite numbers, expected line integrals`);
}

/**
 * Lays out the problem for `subsets` ordered subsets (at most the view count). With
 * `unmeasuredWeight` 0 the unmeasured channels would carry no data term, so the detector is not
 * extended at all (same result, a third of the work on a typical truncated scan); otherwise it
 * is extended to cover the support and those channels get that weight.
 */
export function setUpProblem(scan: Scan, grid: ReconGrid, support: Uint8Array, subsets: number, unmeasuredWeight: number): Problem {
  const g = scan.geometry;
  const nViews = viewCount(g);
  const nMeasured = g.detector.channels;
  const rows = g.detector.rows;
  // The support is the same in every slice (supportMask): its first slice sets the reach.
  const plane = planeGrid(grid);
  const extension = unmeasuredWeight > 0 ? extendToCover(g, maskRadius(plane, support.subarray(0, plane.nx * plane.ny))) : { left: 0, right: 0, geometry: g };
  const plan = planSubsets(nViews, subsets);
  const nCh = extension.geometry.detector.channels;
  const k0 = extension.left;
  const permuted = permuteRows(scan.data, nMeasured * rows, plan.permutation);
  const lines = nViews * rows;
  const target = new Float32Array(lines * nCh);
  const dataWeight = new Float32Array(lines * nCh).fill(unmeasuredWeight);
  for (let q = 0; q < lines; q++) {
    target.set(permuted.subarray(q * nMeasured, (q + 1) * nMeasured), q * nCh + k0);
    dataWeight.fill(1, q * nCh + k0, q * nCh + k0 + nMeasured);
  }
  return {
    grid,
    support,
    extension,
    plan,
    geometry: permuteGeometry(extension.geometry, plan.permutation),
    nViews,
    rows,
    nCh,
    measured: [k0, k0 + nMeasured],
    target,
    dataWeight,
  };
}

/**
 * Per view: sum of squares of (a - b) over channels [k0, k1) of each of its `rows` detector rows
 * (or outside them when `outside`).
 */
export function perViewSquares(a: Float32Array, b: Float32Array, nCh: number, k0: number, k1: number, outside = false, rows = 1): Float64Array {
  const nViews = a.length / (nCh * rows);
  const out = new Float64Array(nViews);
  for (let v = 0; v < nViews; v++) {
    let s = 0;
    for (let line = v * rows; line < (v + 1) * rows; line++) {
      for (let k = 0; k < nCh; k++) {
        if ((k >= k0 && k < k1) === outside) continue;
        const d = a[line * nCh + k] - b[line * nCh + k];
        s += d * d;
      }
    }
    out[v] = s;
  }
  return out;
}
