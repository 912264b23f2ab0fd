import { describe, expect, it } from 'vitest';
import { cropDetector, extendDetector, presetGeometry } from '../../web/core/geometry/presets';
import { firstChannelU } from '../../web/core/geometry/view-vectors';

describe('detector crop and extension', () => {
  // DEVELOPERS.md, "Geometry": u_k = (k - (n-1)/2) pitch + offset. Cropping and extending must keep every kept
  // channel at the same u (common practice: a sub-detector is a window on the same detector).
  it('cropping keeps channel positions', () => {
    const g = presetGeometry('demo')!;
    const { geometry: c, first } = cropDetector(g, 345, 20);
    expect(c.detector.channels).toBe(345);
    expect(firstChannelU(c)).toBeCloseTo(firstChannelU(g) + first * g.detector.pitch[0], 9);
  });

  it('extension keeps channel positions and round-trips with a crop', () => {
    const g = presetGeometry('demo-curved')!;
    const e = extendDetector(g, 30, 12);
    expect(e.detector.channels).toBe(g.detector.channels + 42);
    expect(firstChannelU(e) + 30 * g.detector.pitch[0]).toBeCloseTo(firstChannelU(g), 9);
    expect(() => extendDetector(g, -1, 0)).toThrow(/whole numbers >= 0/);
  });

  it('rejects a crop that leaves the detector', () => {
    const g = presetGeometry('demo')!;
    expect(() => cropDetector(g, 2000)).toThrow(/channels: got 2000/);
    expect(() => cropDetector(g, 1000, 200)).toThrow(/detector offset/);
  });
});
