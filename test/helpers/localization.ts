// How well a consistency report localizes a false disk: the flagged rays against the rays the
// geometry says cross the disk.
import { expect } from 'vitest';
import type { ConsistencyReport } from '../../web/core/consistency/consistency-report';
import type { Geometry } from '../../web/core/geometry/types';
import { rayDistances, type Disk } from './disk';

/**
 * Checks that the report flags the rays through the disk's core (chord at least its radius),
 * that flagged rays lie in the disk's shadow (radius + `marginMm`, for the prior's pixels and
 * the flagging average), and that every view whose rays all miss the shadow has a lower RMS
 * residual than any view with rays through the core.
 */
export function expectDiskLocalized(report: ConsistencyReport, g: Geometry, disk: Disk, marginMm: number): void {
  const dist = rayDistances(g, disk);
  const { flagged, viewRms } = report.profiles;
  const nCh = report.channels;
  let core = 0, coreFlagged = 0, flaggedTotal = 0, flaggedInShadow = 0;
  let missMax = 0, hitMin = Infinity, missViews = 0, hitViews = 0;
  for (let v = 0; v < report.views; v++) {
    let inShadow = 0, inCore = 0;
    for (let k = 0; k < nCh; k++) {
      const i = v * nCh + k;
      const shadow = dist[i] < disk.r + marginMm;
      // Chord 2 sqrt(r^2 - d^2) >= r when d <= r sqrt(3)/2.
      if (dist[i] <= (disk.r * Math.sqrt(3)) / 2) {
        inCore++;
        coreFlagged += flagged[i];
      }
      if (shadow) inShadow++;
      if (flagged[i]) {
        flaggedTotal++;
        if (shadow) flaggedInShadow++;
      }
    }
    core += inCore;
    if (inShadow === 0) {
      missViews++;
      missMax = Math.max(missMax, viewRms[v]);
    } else if (inCore >= 5) {
      hitViews++;
      hitMin = Math.min(hitMin, viewRms[v]);
    }
  }
  expect(core).toBeGreaterThan(500);
  expect(coreFlagged / core).toBeGreaterThanOrEqual(0.99);
  expect(flaggedInShadow / flaggedTotal).toBeGreaterThanOrEqual(0.95);
  // The disk lies outside the measured FOV: some views' measured rays miss it entirely.
  expect(missViews).toBeGreaterThan(10);
  expect(hitViews).toBeGreaterThan(10);
  expect(missMax).toBeLessThan(hitMin);
}
