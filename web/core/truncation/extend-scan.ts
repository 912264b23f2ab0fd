// Running the detector extension kernel (assembly/extend.ts) over a workspace, split by rows
// across the workers: inside FBP (recon/fbp.ts), inside FDK's chunks (row-extension.ts, rows of
// all views of a cone-beam scan) and on its own for methods that want the extended sinogram
// itself (iterative and prior-guided reconstruction).
import type { Buf, Workspace } from '../engine/workspace';
import { splitRange } from '../recon/split';
import { EXTEND_PARAMS } from './extend-methods';
import type { DetectorExtension } from './extension-plan';

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
  const params = { ...tables.params, ptr: tables.params.ptr + firstRow * EXTEND_PARAMS * 4 };
  await ws.run(
    splitRange(rows, ws.parallelism).map(([a, b]) => ({
      kernel: 'extendViews' as const,
      args: [measured, nCh, a, b, ext.left, ext.right, ext.code, params, tables.coord, out],
      writes: [{ buf: out, start: a * nExt, length: (b - a) * nExt }],
    })),
  );
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
