// A simulated truncated scan of the thorax demo phantom: the 'demo' fan-beam geometry with its
// detector cropped to 345 of 1100 channels (measured FOV radius about 102 mm, body 340 mm wide),
// fewer views to keep tests fast; exact line integrals, no noise.
import { cropDetector, presetGeometry } from '../../web/core/geometry/presets';
import type { Geometry } from '../../web/core/geometry/types';
import { validateGeometry } from '../../web/core/geometry/validate';
import type { EllipsePhantom } from '../../web/core/phantoms/ellipse';
import { thorax } from '../../web/core/phantoms/thorax';
import type { Scan } from '../../web/core/scan';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { analyticConeProjections } from '../../web/core/simulate/analytic-cone';
import type { SolidPhantom } from '../../web/core/phantoms/solid';

export function truncatedThoraxGeometry(views = 180): Geometry {
  const cropped = cropDetector(presetGeometry('demo')!, 345).geometry;
  return validateGeometry({ ...cropped, anglesDeg: { start: 0, step: 360 / views, count: views } });
}

export function truncatedThoraxScan(views = 180): { scan: Scan; phantom: EllipsePhantom } {
  const phantom = thorax();
  const geometry = truncatedThoraxGeometry(views);
  // Each channel averages 4 rays over its width, as a detector element does.
  return { scan: { geometry, data: analyticSinogram(phantom, geometry, 4), muWater: phantom.muWater }, phantom };
}

/**
 * A small C-arm short scan of a 3D phantom (the thorax's, in the tests that use it): 100 views
 * over 200 degrees of a 120 x 10 flat panel, field of view radius about 60 mm against a 340 mm
 * wide body; exact ray integrals.
 */
export const truncatedThoraxConeGeometry: Geometry = validateGeometry({
  kind: 'cone', detector: { shape: 'flat', channels: 120, rows: 10, pitch: [1.6, 5], offset: [0, 0] },
  sourceIsocenter: 750, sourceDetector: 1200, anglesDeg: { start: 0, step: 2, count: 100 },
});

export async function truncatedConeScan(phantom: SolidPhantom): Promise<Scan> {
  const geometry = truncatedThoraxConeGeometry;
  return { geometry, data: await analyticConeProjections(phantom, geometry), muWater: phantom.muWater };
}
