// Differentiated backprojection at arbitrary points through the engine (assembly/dbp.ts), split
// by points over the workers. The result at a point is the Hilbert transform of the object along
// that point's chord direction (derivative.ts).
import type { Workspace } from '../engine/workspace';
import type { Geometry } from '../geometry/types';
import { firstChannelU, kernelKind, viewVectors, VIEW_STRIDE } from '../geometry/view-vectors';
import type { RunHooks } from '../run-hooks';
import { throwIfCancelled } from '../errors';
import { splitRange } from '../recon/split';

/** Points per kernel call, so that long runs can report progress and be cancelled. */
const CHUNK = 16384;

/**
 * DBP of `derivative` (nViews x nCh, from dbpDerivative) at `points` ((x, y, ex, ey) per point,
 * mm and unit direction): one value per point.
 */
export async function dbpAtPoints(ws: Workspace, g: Geometry, derivative: Float32Array, points: Float32Array, hooks: RunHooks = {}): Promise<Float32Array> {
  const nPts = points.length / 4;
  const stride = (nPts + 3) & ~3;
  const table = viewVectors(g);
  const nViews = table.length / VIEW_STRIDE, nCh = g.detector.channels;
  const rowStride = nCh + 3;
  // Rows padded with zeros around the channels (cell 0 and after nCh), as the kernel samples them.
  const padded = new Float32Array(nViews * rowStride);
  for (let v = 0; v < nViews; v++) padded.set(derivative.subarray(v * nCh, (v + 1) * nCh), v * rowStride + 1);
  const planes = new Float32Array(4 * stride);
  for (let p = 0; p < nPts; p++) for (let c = 0; c < 4; c++) planes[c * stride + p] = points[4 * p + c];

  ws.reset();
  const views = ws.alloc('dbpViews', table.length);
  const deriv = ws.alloc('dbpDerivative', padded.length);
  const pts = ws.alloc('dbpPoints', planes.length);
  const out = ws.alloc('dbpOut', stride);
  await ws.write(views, table);
  await ws.write(deriv, padded);
  await ws.write(pts, planes);
  const kind = kernelKind(g), u0 = firstChannelU(g), pitch = g.detector.pitch[0];
  for (let c0 = 0; c0 < stride; c0 += CHUNK) {
    throwIfCancelled(hooks.signal);
    const c1 = Math.min(stride, c0 + CHUNK);
    await ws.run(
      splitRange(c1 - c0, ws.parallelism, 4).map(([a, b]) => ({
        kernel: 'dbpPoints' as const,
        args: [pts, stride, c0 + a, c0 + b, out, views, kind, nViews, deriv, rowStride, nCh, u0, pitch],
        writes: [{ buf: out, start: c0 + a, length: b - a }],
      })),
    );
    hooks.onProgress?.(c1 / stride, 'differentiated backprojection');
  }
  const result = await ws.read(out, 0, nPts);
  ws.reset();
  return result;
}
