// Running the detector extension kernel (assembly/extend.ts) over a workspace, split by rows
// across the workers: inside FBP (recon/fbp.ts), inside FDK's chunks (row-extension.ts, rows of
// all views of a cone-beam scan) and on its own for methods that want the extended sinogram
// itself (iterative and prior-guided reconstruction).
import type { Buf, Workspace } from '../engine/workspace';
import { splitRange } from '../recon/split';
import { EXTEND_PARAMS } from './extend-methods';
import type { Scan } from '../scan';
import type { DetectorExtension, ExtensionPlan } from './extension-plan';

/** An extension's tables in engine memory. */
export interface ExtensionTables {
  /** EXTEND_PARAMS floats per row. */
  params: Buf;
  /** s of every extended channel, mm. */
  coord: Buf;
}

/** Lays out and writes the extension's tables after whatever the workspace already holds. */
export async function writeExtensionTables(ws: Workspace, ext: DetectorExtension): Promise<ExtensionTables> {
  const params = ws.alloc('extendParams', ext.params.length);
  const coord = ws.alloc('extendCoord', ext.coord.length);
  await ws.write(params, ext.params);
  await ws.write(coord, ext.coord);
  return { params, coord };
}

/**
 * Extends rows [0, rows) of `measured` (nCh channels each) into `out` (left + nCh + right
 * channels each), row i taking the parameters of table row firstRow + i.
 */
export async function extendRows(
  ws: Workspace, ext: DetectorExtension, tables: ExtensionTables, measured: Buf, out: Buf, rows: number, nCh: number, firstRow = 0,
): Promise<void> {
  const nExt = ext.left + nCh + ext.right;
  if (ext.coord.length !== nExt || ext.params.length < (firstRow + rows) * EXTEND_PARAMS || out.length < rows * nExt || measured.length < rows * nCh) {
    throw new RangeError(`detector extension: tables for ${ext.coord.length} channels and ${ext.params.length / EXTEND_PARAMS} rows do not fit rows ${firstRow} to ${firstRow + rows - 1} of ${nCh} + ${ext.left + ext.right} channels`);
  }
  if (ext.table) return copyTableRows(ws, ext, ext.table, measured, out, rows, nCh, firstRow);
  const params = { ...tables.params, ptr: tables.params.ptr + firstRow * EXTEND_PARAMS * 4 };
  await ws.run(
    splitRange(rows, ws.parallelism).map(([a, b]) => ({
      kernel: 'extendViews' as const,
      args: [measured, nCh, a, b, ext.left, ext.right, ext.code, params, tables.coord, out],
      writes: [{ buf: out, start: a * nExt, length: (b - a) * nExt }],
    })),
  );
}

/** Rows of a table extension: the measured row between the table's left and right values. */
async function copyTableRows(ws: Workspace, ext: DetectorExtension, table: Float32Array, measured: Buf, out: Buf, rows: number, nCh: number, firstRow: number): Promise<void> {
  const side = ext.left + ext.right, nExt = side + nCh;
  if (table.length < (firstRow + rows) * side) throw new RangeError(`detector extension: a table of ${table.length / Math.max(1, side)} rows does not hold rows ${firstRow} to ${firstRow + rows - 1}`);
  const m = await ws.read(measured, 0, rows * nCh);
  const rowsOut = new Float32Array(rows * nExt);
  for (let i = 0; i < rows; i++) {
    const t = (firstRow + i) * side;
    rowsOut.set(table.subarray(t, t + ext.left), i * nExt);
    rowsOut.set(m.subarray(i * nCh, (i + 1) * nCh), i * nExt + ext.left);
    rowsOut.set(table.subarray(t + ext.left, t + side), i * nExt + ext.left + nCh);
  }
  await ws.write(out, rowsOut);
}

/**
 * Extends `measured` (nViews x nCh, in the workspace) into `out` (nViews x (left + nCh + right)).
 * Lays out the plan's tables after whatever the workspace already holds.
 */
export async function runExtension(ws: Workspace, ext: DetectorExtension, measured: Buf, out: Buf, nViews: number, nCh: number): Promise<void> {
  const nExt = ext.left + nCh + ext.right;
  if (ext.coord.length !== nExt || ext.params.length < nViews * EXTEND_PARAMS) {
    throw new RangeError(`detector extension: tables for ${ext.coord.length} channels and ${ext.params.length / EXTEND_PARAMS} views do not fit ${nViews} views of ${nCh} + ${ext.left + ext.right} channels`);
  }
  await extendRows(ws, ext, await writeExtensionTables(ws, ext), measured, out, nViews, nCh);
}

/** The scan on the plan's extended detector (resets the workspace's layout). */
export async function extendScan(ws: Workspace, scan: Scan, plan: DetectorExtension & Pick<ExtensionPlan, 'geometry'>): Promise<Scan> {
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
