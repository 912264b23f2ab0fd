// A whole scan on a plan's extended detector, through the engine's extension step (runExtension),
// for tests that look at the extended projections themselves.
import type { Workspace } from '../../web/core/engine/workspace';
import type { Scan } from '../../web/core/scan';
import { runExtension } from '../../web/core/truncation/extend-scan';
import type { ExtensionPlan } from '../../web/core/truncation/extension-plan';

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
