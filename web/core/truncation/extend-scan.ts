// Running the detector extension kernel (assembly/extend.ts) over a workspace, split by views
// across the workers: inside FBP (recon/fbp.ts) and on its own for methods that want the
// extended sinogram itself (iterative and prior-guided reconstruction).
import type { Buf, Workspace } from '../engine/workspace';
import { splitRange } from '../recon/split';
import type { Scan } from '../scan';
import type { DetectorExtension, ExtensionPlan } from './extension-plan';

/**
 * Extends `measured` (nViews x nCh, in the workspace) into `out` (nViews x (left + nCh + right)).
 * Lays out the plan's tables after whatever the workspace already holds.
 */
export async function runExtension(ws: Workspace, ext: DetectorExtension, measured: Buf, out: Buf, nViews: number, nCh: number): Promise<void> {
  const nExt = ext.left + nCh + ext.right;
  if (ext.coord.length !== nExt || ext.params.length < nViews * 8 || out.length < nViews * nExt || measured.length < nViews * nCh) {
    throw new RangeError(`detector extension: tables for ${ext.coord.length} channels and ${ext.params.length / 8} views do not fit ${nViews} views of ${nCh} + ${ext.left + ext.right} channels`);
  }
  const params = ws.alloc('extendParams', ext.params.length);
  const coord = ws.alloc('extendCoord', nExt);
  await ws.write(params, ext.params);
  await ws.write(coord, ext.coord);
  await ws.run(
    splitRange(nViews, ws.parallelism).map(([a, b]) => ({
      kernel: 'extendViews' as const,
      args: [measured, nCh, a, b, ext.left, ext.right, ext.code, params, coord, out],
      writes: [{ buf: out, start: a * nExt, length: (b - a) * nExt }],
    })),
  );
}

/** The scan on the plan's extended detector (resets the workspace's layout). */
export async function extendScan(ws: Workspace, scan: Scan, plan: ExtensionPlan): Promise<Scan> {
  const nCh = scan.geometry.detector.channels;
  const nViews = scan.data.length / nCh;
  const nExt = plan.geometry.detector.channels;
  ws.reset();
  const measured = ws.alloc('measured', scan.data.length);
  const out = ws.alloc('extended', nViews * nExt);
  await ws.write(measured, scan.data);
  await runExtension(ws, plan, measured, out, nViews, nCh);
  return { ...scan, geometry: plan.geometry, data: await ws.read(out) };
}
