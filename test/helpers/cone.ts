// Cone-beam geometries and helpers shared by the cone-beam tests.
import type { Geometry } from '../../web/core/geometry/types';
import { validateGeometry } from '../../web/core/geometry/validate';
import type { Workspace } from '../../web/core/engine/workspace';
import { Projector3d } from '../../web/core/recon/projector3d';
import { readFileSync } from 'node:fs';
import { basename } from 'node:path';
import { readImageFile } from '../../web/core/formats/read-image';
import { asMuVolume } from '../../web/core/formats/volume';
import type { Volume, VolumeGrid } from '../../web/core/volume';

/** A circular cone-beam geometry with a flat detector (mm, degrees). */
export function cone(opts: {
  channels: number; rows: number; pitch: number; views: number; spanDeg?: number; startDeg?: number;
  R?: number; D?: number; offset?: [number, number];
}): Geometry {
  const span = opts.spanDeg ?? 360;
  return validateGeometry({
    kind: 'cone',
    detector: { shape: 'flat', channels: opts.channels, rows: opts.rows, pitch: [opts.pitch, opts.pitch], offset: opts.offset ?? [0, 0] },
    sourceIsocenter: opts.R ?? 500,
    sourceDetector: opts.D ?? 900,
    anglesDeg: { start: opts.startDeg ?? 0, step: span / opts.views, count: opts.views },
  });
}

/** Forward projection of a volume with a Projector3d in `ws`. */
export async function project(ws: Workspace, grid: VolumeGrid, g: Geometry, volume: Float32Array): Promise<Float32Array> {
  ws.reset();
  const p = await Projector3d.create(ws, grid, g);
  const vb = ws.alloc('vol', volume.length);
  const sb = ws.alloc('proj', p.projectionLength);
  await ws.write(vb, volume);
  await p.forward(vb, sb);
  return ws.read(sb);
}

/** A volume file read as every volume is read (readImageFile, then asMuVolume). */
export async function readVolumeFile(path: string, muWater?: number): Promise<Volume> {
  return asMuVolume((await readImageFile([{ name: basename(path), bytes: new Uint8Array(readFileSync(path)) }])).volume, muWater);
}
