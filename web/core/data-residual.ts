// Data consistency of a reconstruction: re-project it (Joseph's method, Projector2d) onto the
// scan's own detector, i.e. the measured channels only, and compare with the measured line
// integrals. A truncation correction that invents mass inside the FOV, or loses it, shows
// here without any reference image. Structures the grid does not cover are not re-projected,
// so the grid should hold the whole object (the default grid does, recipe/grid.ts).
import type { Workspace } from './engine/workspace';
import { throwIfCancelled } from './errors';
import type { Image2D } from './image';
import { Projector2d } from './recon/projector';
import type { RunHooks } from './run-hooks';
import type { Scan } from './scan';

export interface DataResidual {
  /** Measured rays compared. */
  rays: number;
  /** Root mean square of (A f - p) over the measured rays (line-integral units). */
  rms: number;
  /** ||A f - p|| / ||p||. */
  relative: number;
  /** Mean of (A f - p): positive when the image holds too much mass along the measured rays. */
  bias: number;
  maxAbs: number;
  /** View with the largest RMS residual, and that RMS. */
  worstView: number;
  worstViewRms: number;
  /** RMS residual per view (for plotting). */
  perViewRms: number[];
  /** Set when the figures come from a sample of the rays (large volumes): what was sampled. */
  sampled?: string;
}

/** Residual of `image` (mu) re-projected onto the measured channels of `scan` (resets the workspace's layout). */
export async function dataResidual(ws: Workspace, image: Image2D, scan: Scan, hooks: RunHooks = {}): Promise<DataResidual> {
  ws.reset();
  const proj = await Projector2d.create(ws, image.grid, scan.geometry);
  const img = ws.alloc('residualImage', image.data.length);
  const sino = ws.alloc('residualSino', proj.nViews * proj.nCh);
  await ws.write(img, image.data);
  throwIfCancelled(hooks.signal);
  await proj.forward(img, sino);
  const ax = await ws.read(sino);
  hooks.onProgress?.(1, 'residual');
  return residualFigures(ax, scan.data, proj.nViews);
}

/** Residual figures of re-projected data `ax` against measured `p`, both nViews x (rays per view). */
export function residualFigures(ax: Float32Array, p: Float32Array, nViews: number): DataResidual {
  const nCh = p.length / nViews;
  let ss = 0, pp = 0, sum = 0, maxAbs = 0, worstView = 0, worstViewRms = 0;
  const perViewRms: number[] = [];
  for (let v = 0; v < nViews; v++) {
    let sv = 0;
    for (let k = v * nCh; k < (v + 1) * nCh; k++) {
      const r = ax[k] - p[k];
      sv += r * r;
      pp += p[k] * p[k];
      sum += r;
      maxAbs = Math.max(maxAbs, Math.abs(r));
    }
    ss += sv;
    const rv = Math.sqrt(sv / nCh);
    perViewRms.push(rv);
    if (rv > worstViewRms) [worstView, worstViewRms] = [v, rv];
  }
  const rays = p.length;
  return { rays, rms: Math.sqrt(ss / rays), relative: pp > 0 ? Math.sqrt(ss / pp) : NaN, bias: sum / rays, maxAbs, worstView, worstViewRms, perViewRms };
}
