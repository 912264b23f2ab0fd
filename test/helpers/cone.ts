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
import type { SolidPhantom } from '../../web/core/phantoms/solid';

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

/**
 * A small volume case: a water ball (25 mm radius) holding a denser ball, on a 24 x 24 x 20 grid
 * of 3 mm; a cone beam whose 48 x 32 cells of 4 mm see all of it (FOV radius 52 mm, half height
 * 33 mm), 36 views.
 */
export const ballsCase = {
  phantom: {
    name: 'balls', muWater: 0.02, radius: 25, halfHeight: 25,
    solids: [
      { shape: 'ellipsoid', cx: 0, cy: 0, cz: 0, a: 25, b: 25, c: 25, phiDeg: 0, value: 0.02 },
      { shape: 'ellipsoid', cx: 8, cy: -4, cz: 5, a: 8, b: 8, c: 8, phiDeg: 0, value: 0.02 },
    ],
  } as SolidPhantom,
  grid: { nx: 24, ny: 24, nz: 20, dx: 3, dy: 3, dz: 3, cx: 0, cy: 0, cz: 0 } as VolumeGrid,
  recipeGrid: { grid: { size: 24, pixel: 3 }, volume: { slices: 20, spacing: 3 } },
  geometry: cone({ channels: 48, rows: 32, pitch: 4, views: 36, R: 300, D: 540 }),
};
