// A cone-beam extension plan as FDK's RowExtension: the plan's tables go to the engine once,
// then every chunk of views runs the 2D extension kernel over its (views x rows) rows, each row
// with its own tail parameters.
import type { Buf, Workspace } from '../engine/workspace';
import type { RowExtension } from '../recon/fdk';
import type { ConeExtensionPlan } from './cone-extension';
import { extendRows, writeExtensionTables, type ExtensionTables } from './extend-scan';

/** FDK's hook for `plan` (truncation/cone-extension.ts planConeExtension). */
export function coneRowExtension(plan: ConeExtensionPlan, channels: number): RowExtension {
  let tables: ExtensionTables | undefined;
  return {
    left: plan.left,
    right: plan.right,
    async prepare(ws: Workspace) {
      tables = await writeExtensionTables(ws, plan);
    },
    async extendRows(ws: Workspace, src: Buf, dst: Buf, view0: number, view1: number) {
      if (!tables) throw new Error('cone row extension: extendRows called before prepare');
      await extendRows(ws, plan, tables, src, dst, (view1 - view0) * plan.rows, channels, view0 * plan.rows);
    },
  };
}
