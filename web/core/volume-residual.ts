// Data consistency of a reconstructed volume: re-project it (Joseph's method, Projector3d) onto
// the cone-beam scan's own detector and compare with the measured line integrals, as
// data-residual.ts does for images. Structures the volume does not cover are not re-projected.
import type { Workspace } from './engine/workspace';
import { throwIfCancelled } from './errors';
import { residualFigures, type DataResidual } from './data-residual';
import { Projector3d } from './recon/projector3d';
import type { RunHooks } from './run-hooks';
import type { Scan } from './scan';
import { withVolumeMemory, type Volume } from './volume';

/** Residual of `volume` (mu) re-projected onto the measured detector of `scan` (resets the workspace's layout). */
export async function volumeDataResidual(ws: Workspace, volume: Volume, scan: Scan, hooks: RunHooks = {}): Promise<DataResidual> {
  ws.reset();
  const proj = await Projector3d.create(ws, volume.grid, scan.geometry);
  const { vol, out } = withVolumeMemory(volume.grid, () => ({
    vol: ws.alloc('residualVolume', volume.data.length),
    out: ws.alloc('residualProjections', proj.projectionLength),
  }));
  await ws.write(vol, volume.data);
  throwIfCancelled(hooks.signal);
  await proj.forward(vol, out);
  const ax = await ws.read(out);
  hooks.onProgress?.(1, 'residual');
  return residualFigures(ax, scan.data, ax.length / (scan.geometry.detector.channels * scan.geometry.detector.rows));
}
