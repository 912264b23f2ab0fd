// Where in the image the disagreeing rays cross: for each pixel, the share of the measured rays
// through it that a consistency report flagged, weighted as the forward projector weights the
// pixel in each ray: map = A^T m / A^T 1 (m = 1 on flagged rays, 1 = every measured ray; A^T
// the exact adjoint of Joseph's projector). A false structure is crossed only by disagreeing
// rays, so it approaches 1 there; elsewhere a pixel sees the structure under a small angle,
// about (2 r / d) / pi of its rays for a disk of radius r at distance d (the fraction of view
// directions through the disk; common practice for reading unfiltered backprojections).
import type { Workspace } from '../engine/workspace';
import { InputError, throwIfCancelled } from '../errors';
import type { ImageGrid } from '../image';
import { Projector2d } from '../recon/projector';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';

/** Pixels whose summed ray weight is below this share of the largest are crossed by too few measured rays to judge (map 0). */
const MIN_COVERAGE = 1e-3;

/**
 * The share of flagged rays through each pixel of `grid` (0 where no measured ray passes).
 * `flagged` is [view][channel] over the scan's measured channels. Resets the workspace layout.
 */
export async function disagreementMap(ws: Workspace, scan: Scan, grid: ImageGrid, flagged: Uint8Array, hooks: RunHooks = {}): Promise<Float32Array> {
  if (flagged.length !== scan.data.length) throw new InputError(`disagreement map: ${flagged.length} flags for ${scan.data.length} measured rays`);
  ws.reset();
  const proj = await Projector2d.create(ws, grid, scan.geometry);
  const sino = ws.alloc('flaggedRays', flagged.length);
  const img = ws.alloc('disagreementMap', grid.nx * grid.ny);
  await ws.write(sino, Float32Array.from(flagged));
  await proj.adjoint(sino, img);
  const hits = await ws.read(img);
  throwIfCancelled(hooks.signal);
  hooks.onProgress?.(0.5, 'disagreement map');
  await ws.write(sino, Float32Array.from(scan.data, (p) => (Number.isFinite(p) ? 1 : 0)));
  await proj.adjoint(sino, img);
  const all = await ws.read(img);
  let most = 0;
  for (const w of all) most = Math.max(most, w);
  const map = new Float32Array(all.length);
  for (let i = 0; i < map.length; i++) map[i] = all[i] > MIN_COVERAGE * most ? Math.min(1, hits[i] / all[i]) : 0;
  hooks.onProgress?.(1, 'disagreement map');
  return map;
}
