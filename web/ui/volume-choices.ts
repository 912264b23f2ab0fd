// What the volume view of a cone-beam scan offers: the scan's reference volume (ground truth)
// and every result that holds a volume, read from storage on demand.
import type { Volume } from '../core/volume';
import type { ResultMeta, ScanMeta } from '../store/records';
import { loadResultVolume } from '../store/results';
import { loadReferenceVolume } from '../store/scans';
import type { VolumeChoice } from './volume-view';

/** The key that stands for the scan's reference volume. */
export const TRUTH_VOLUME = 'truth';

/** The reference volume first, then the results with volumes, oldest first. */
export function volumeChoices(scan: ScanMeta, results: ResultMeta[]): VolumeChoice[] {
  const out: VolumeChoice[] = scan.referenceVolume ? [{ key: TRUTH_VOLUME, label: 'Ground truth' }] : [];
  for (const r of results) if (r.scanId === scan.id && r.volume) out.push({ key: r.id, label: r.name, metrics: r.volumeMetrics });
  return out;
}

/** Reads a choice's volume from the page's storage. */
export function volumeLoader(scanId: string): (key: string) => Promise<Volume> {
  return async (key) => (key === TRUTH_VOLUME ? loadReferenceVolume(scanId) : (await loadResultVolume(key)).volume);
}
