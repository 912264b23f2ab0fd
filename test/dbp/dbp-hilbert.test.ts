// DBP against the exact Hilbert transform of an ellipse phantom along lines (test/helpers/
// hilbert-phantom.ts: elementary integral) for parallel and fan scans, flat and curved
// detectors, full turns in either direction and a short scan (Noo, Clackdoyle & Pack 2004,
// REFERENCES.md [noo2004]: the backprojected derivative is -2 pi times the Hilbert transform).
import { describe, expect, it } from 'vitest';
import type { Geometry } from '../../web/core/geometry/types';
import { validateGeometry } from '../../web/core/geometry/validate';
import { firstChannelU, kernelKind, viewVectors } from '../../web/core/geometry/view-vectors';
import { dbpAtPoints } from '../../web/core/dbp/dbp-points';
import { dbpPointsReference } from '../../web/core/dbp/dbp-points-reference';
import { dbpDerivative } from '../../web/core/dbp/derivative';
import { analyticSinogram } from '../../web/core/simulate/analytic';
import { localWorkspace } from '../helpers/engine';
import { clearOfEdges, phantomHilbert, smallPhantom } from '../helpers/hilbert-phantom';

function fan(shape: 'flat' | 'curved', start: number, step: number, count: number): Geometry {
  return validateGeometry({ kind: 'fan', detector: { shape, channels: 320, rows: 1, pitch: [0.6, 0.6], offset: [0, 0] }, sourceIsocenter: 400, sourceDetector: 700, anglesDeg: { start, step, count } });
}

const geometries: Array<[string, Geometry]> = [
  ['parallel, half turn', validateGeometry({ kind: 'parallel', detector: { channels: 320, pitch: 0.45 }, anglesDeg: { start: 0, step: 0.5, count: 360 } })],
  ['parallel, full turn', validateGeometry({ kind: 'parallel', detector: { channels: 320, pitch: 0.45 }, anglesDeg: { start: 0, step: 1, count: 360 } })],
  ['fan, flat, full turn', fan('flat', 0, 1, 360)],
  ['fan, flat, full turn clockwise', fan('flat', 90, -1, 360)],
  ['fan, curved, full turn', fan('curved', 0, 1, 360)],
  // 180 degrees plus the fan angle (2 x 9.6) plus a margin, Parker weights.
  ['fan, flat, short scan', fan('flat', 20, 0.5, 420)],
];

/** Points inside |x| < 40 mm at least 3 mm from every edge, with chord directions all round. */
function testPoints(): { points: Float32Array; truth: Float64Array } {
  const p = smallPhantom();
  const pts: number[] = [], truth: number[] = [];
  for (let k = 0; k < 400 && truth.length < 150; k++) {
    const x = -40 + ((k * 37) % 80) + 0.31, y = -40 + ((k * 53) % 80) + 0.17, psi = (k * 0.7) % Math.PI;
    if (Math.hypot(x, y) > 40 || !clearOfEdges(p, x, y, 3)) continue;
    pts.push(x, y, Math.cos(psi), Math.sin(psi));
    truth.push(phantomHilbert(p, x, y, Math.cos(psi), Math.sin(psi)));
  }
  return { points: Float32Array.from(pts), truth: Float64Array.from(truth) };
}

describe('DBP equals the Hilbert transform along the chosen lines', () => {
  const { points, truth } = testPoints();
  const scale = Math.sqrt(truth.reduce((s, v) => s + v * v, 0) / truth.length);
  it.each(geometries)('%s', async (_, g) => {
    const sino = analyticSinogram(smallPhantom(), g, 2);
    const d = dbpDerivative({ geometry: g, data: sino });
    expect(d.warnings).toEqual([]);
    const ws = await localWorkspace(2);
    const engine = await dbpAtPoints(ws, g, d.data, points);
    const reference = dbpPointsReference(points, viewVectors(g), kernelKind(g), d.data, g.detector.channels, firstChannelU(g), g.detector.pitch[0]);
    let err = 0, worst = 0, agree = 0;
    for (let i = 0; i < truth.length; i++) {
      err += (engine[i] - truth[i]) ** 2;
      worst = Math.max(worst, Math.abs(engine[i] - truth[i]));
      agree = Math.max(agree, Math.abs(engine[i] - reference[i]));
    }
    // The engine kernel and the plain reference sample the same derivative (f32 rounding).
    expect(agree, 'engine against reference').toBeLessThan(1e-4 * scale);
    // Sampling (0.5-1 degree views, 0.45-0.6 mm channels, central differences) leaves about 1-2%
    // of the Hilbert transform's RMS size (measured 1.1-1.8%), more within a few mm of an edge,
    // where the sampled derivative is smoothed over a channel or two (measured up to 15%).
    expect(Math.sqrt(err / truth.length), 'RMS error').toBeLessThan(0.025 * scale);
    expect(worst, 'largest error').toBeLessThan(0.2 * scale);
  });
});
