// A chord's line integral read from the scan (line-integral.ts) against the phantom's exact line
// integral (REFERENCES.md [ellipse-projection]), for every kind of scan DBP takes.
import { describe, expect, it } from 'vitest';
import { chordLineIntegral, sinogramView } from '../../web/core/dbp/line-integral';
import type { Geometry } from '../../web/core/geometry/types';
import { validateGeometry } from '../../web/core/geometry/validate';
import { kernelKind, viewVectors } from '../../web/core/geometry/view-vectors';
import { lineIntegral } from '../../web/core/phantoms/ellipse';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { smallPhantom } from '../helpers/hilbert-phantom';

const fan = (shape: 'flat' | 'curved', start: number, step: number, count: number): Geometry =>
  validateGeometry({ kind: 'fan', detector: { shape, channels: 400, rows: 1, pitch: [0.5, 0.5], offset: [0, 0] }, sourceIsocenter: 400, sourceDetector: 700, anglesDeg: { start, step, count } });

const geometries: Array<[string, Geometry]> = [
  ['parallel, half turn', validateGeometry({ kind: 'parallel', detector: { channels: 360, pitch: 0.5 }, anglesDeg: { start: 0, step: 1, count: 180 } })],
  ['parallel, full turn', validateGeometry({ kind: 'parallel', detector: { channels: 360, pitch: 0.5 }, anglesDeg: { start: 0, step: 1, count: 360 } })],
  ['fan, flat, full turn', fan('flat', 0, 1, 360)],
  ['fan, curved, clockwise', fan('curved', 0, -1, 360)],
  ['fan, flat, short scan', fan('flat', 30, 1, 215)],
];

describe('the line integral of a chord, from the scan', () => {
  it.each(geometries)('%s', (_, g) => {
    const p = smallPhantom();
    const s = sinogramView(analyticSinogram(p, g, 1), viewVectors(g), kernelKind(g), g);
    for (const [x, y, psi] of [[0, 0, 0.3], [10, -20, 1.1], [-25, 5, 2.9], [5, 30, Math.PI / 2], [0, 0, 3.1]]) {
      const ex = Math.cos(psi), ey = Math.sin(psi);
      const exact = lineIntegral(p, x, y, ex, ey);
      // Linear interpolation between 1 degree views and 0.5 mm channels (measured well within 1%).
      expect(Math.abs(chordLineIntegral(s, x, y, ex, ey)! - exact), `${x}, ${y}, ${psi}`).toBeLessThan(0.01 * exact);
    }
  });
});
