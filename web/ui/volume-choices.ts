// What the volume view of a cone-beam scan offers: the scan's reference volume (ground truth)
// and every result that holds a volume; their planes are read in the engine's coordinator from
// the stored slabs (the page never holds a volume).
import type { StoredVolumeInfo } from '../store/volumes';
import type { ResultMeta, ScanMeta } from '../store/records';
import type { EngineClient } from '../worker/client';
import type { VolumeChoice, VolumePlanes } from './volume-view';

/** The key that stands for the scan's reference volume. */
export const TRUTH_VOLUME = 'truth';

const info = (v: StoredVolumeInfo) => ({ grid: v.grid, quantity: 'mu' as const, muWater: v.muWater, fovRadius: v.fovRadius, fovHalfHeight: v.fovHalfHeight });

/** The reference volume first, then the results with volumes, oldest first. */
export function volumeChoices(scan: ScanMeta, results: ResultMeta[]): VolumeChoice[] {
  const out: VolumeChoice[] = scan.referenceVolume ? [{ key: TRUTH_VOLUME, label: 'Ground truth', info: info(scan.referenceVolume) }] : [];
  for (const r of results) if (r.scanId === scan.id && r.volume) out.push({ key: r.id, label: r.name, info: info(r.volume), metrics: r.volumeMetrics });
  return out;
}

/** Reads a choice's planes (and its file) through the engine. */
export function volumePlanes(client: EngineClient, scanId: string): VolumePlanes {
  const ref = (key: string) => (key === TRUTH_VOLUME ? { owner: 'scan' as const, id: scanId } : { owner: 'result' as const, id: key });
  return {
    plane: (key, plane, index) => client.volumePlane(ref(key), plane, index),
    file: (key) => client.volumeFile(ref(key)),
  };
}
