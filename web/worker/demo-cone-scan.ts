// The built-in cone-beam demo, made when the user asks for it: the 'demo-cone' C-arm scan
// (flat panel, 200-degree arc, FOV radius 118 mm) of the 3D thorax phantom, which is 340 mm
// wide and so truncated in every view, binned to 2 mm cells and 1-degree steps so that it
// is made and reconstructed in seconds; photon noise as the 2D demo. The ground truth is the
// phantom voxelized on 3 mm voxels, made slab by slab so that progress shows and a cancel is
// heard; its central slice is the 2D reference.
import { throwIfCancelled } from '../core/errors';
import { coneFovHalfHeight } from '../core/geometry/cone';
import { presetGeometry } from '../core/geometry/presets';
import { validateGeometry } from '../core/geometry/validate';
import { fovRadius } from '../core/geometry/view-vectors';
import { voxelize } from '../core/phantoms/solid';
import { thorax3d } from '../core/phantoms/thorax-3d';
import type { RunHooks } from '../core/run-hooks';
import type { Scan } from '../core/scan';
import { analyticConeProjections } from '../core/simulate/analytic-cone';
import { addPhotonNoise } from '../core/simulate/noise';
import { axialSlice, sliceAt, type Volume, type VolumeGrid } from '../core/volume';
import type { StoredImage } from '../store/records';

/** Settings of the cone-beam demo (see the file comment). */
export const CONE_DEMO = { preset: 'demo-cone', bin: 2, viewStep: 2, photons: 200_000, seed: 7, truthVoxel: 3, truthSubsamples: 3 };

export type ConeDemoSettings = typeof CONE_DEMO;

export const CONE_DEMO_NAME = 'Demo: thorax phantom, truncated cone-beam scan (C-arm)';

const yieldToEvents = () => new Promise<void>((r) => setTimeout(r, 0));

/** The demo geometry: the preset with `bin` x `bin` cells merged and every `viewStep`-th view. */
export function coneDemoGeometry(settings: ConeDemoSettings = CONE_DEMO) {
  const g = presetGeometry(settings.preset)!;
  const a = g.anglesDeg as { start: number; step: number; count: number };
  const d = g.detector;
  return validateGeometry({
    ...g,
    detector: { ...d, channels: d.channels / settings.bin, rows: d.rows / settings.bin, pitch: [d.pitch[0] * settings.bin, d.pitch[1] * settings.bin] },
    anglesDeg: { start: a.start, step: a.step * settings.viewStep, count: Math.floor(a.count / settings.viewStep) },
  });
}

/** Simulates the cone-beam demo scan, its reference volume and that volume's central slice. */
export async function buildConeDemoScan(hooks: RunHooks = {}, settings: ConeDemoSettings = CONE_DEMO): Promise<{ scan: Scan; reference: StoredImage; referenceVolume: Volume }> {
  const geometry = coneDemoGeometry(settings);
  const phantom = thorax3d();
  const data = await analyticConeProjections(phantom, geometry, 1, {
    signal: hooks.signal,
    onProgress: (f) => hooks.onProgress?.(0.8 * f, 'projections'),
  });
  addPhotonNoise(data, settings.photons, settings.seed);

  // Truth: covering the phantom across, and the measured height with a margin; odd slice
  // count so that one slice lies on the orbit plane.
  const v = settings.truthVoxel;
  const n = Math.ceil((2 * phantom.radius) / v / 4) * 4 + 8;
  const nz = 2 * Math.ceil((1.1 * coneFovHalfHeight(geometry)) / v) + 1;
  const grid: VolumeGrid = { nx: n, ny: n, nz, dx: v, dy: v, dz: v, cx: 0, cy: 0, cz: 0 };
  const truth = new Float32Array(n * n * nz);
  const slab = 8;
  for (let k0 = 0; k0 < nz; k0 += slab) {
    throwIfCancelled(hooks.signal);
    const slices = Math.min(slab, nz - k0);
    const part: VolumeGrid = { ...grid, nz: slices, cz: (k0 - (nz - 1) / 2 + (slices - 1) / 2) * v };
    truth.set(voxelize(phantom, part, settings.truthSubsamples), k0 * n * n);
    hooks.onProgress?.(0.8 + (0.2 * (k0 + slices)) / nz, 'ground truth');
    await yieldToEvents();
  }
  const referenceVolume: Volume = {
    grid, data: truth, quantity: 'mu', muWater: phantom.muWater, fovRadius: fovRadius(geometry), fovHalfHeight: coneFovHalfHeight(geometry),
  };
  const central = axialSlice(referenceVolume, sliceAt(grid, 0));
  const notes = { phantom: 'thorax (3D)', photons: String(settings.photons), seed: String(settings.seed), binnedFrom: settings.preset };
  return {
    scan: { geometry, data, muWater: phantom.muWater, notes },
    reference: { grid: central.grid, data: central.data, muWater: phantom.muWater, fovRadius: central.fovRadius },
    referenceVolume,
  };
}
