import { describe, expect, it } from 'vitest';
import { validateGeometry, checkGeometryMatchesData } from '../../web/core/geometry/validate';
import { fovRadius, viewVectors, VIEW_STRIDE } from '../../web/core/geometry/view-vectors';
import { InputError } from '../../web/core/errors';
import { analyticSinogram } from '../../web/core/simulate/analytic';

const fan = {
  kind: 'fan', detector: { shape: 'flat', channels: 100, rows: 1, pitch: [1, 1], offset: [0, 0] },
  sourceIsocenter: 500, sourceDetector: 1000, anglesDeg: { start: 0, step: 1, count: 360 },
};
const edit = (path: string[], value: unknown) => {
  const g = structuredClone(fan) as Record<string, unknown>;
  let o = g as Record<string, unknown>;
  for (const k of path.slice(0, -1)) o = o[k] as Record<string, unknown>;
  o[path.at(-1)!] = value;
  return g;
};

describe('geometry validation: messages name the field, the value and what was expected', () => {
  it.each([
    [['kind'], 'helical', /geometry\.kind: got "helical", expected "parallel", "fan" or "cone"/],
    [['sourceDetector'], 400, /geometry\.sourceDetector: got 400, expected a distance greater than the source to isocentre distance \(500 mm\)/],
    [['sourceIsocenter'], -5, /geometry\.sourceIsocenter: got -5, expected a positive number \(mm\)/],
    [['detector', 'channels'], 0, /geometry\.detector\.channels: got 0, expected a whole number/],
    [['detector', 'channels'], 10.5, /detector\.channels: got 10\.5/],
    [['detector', 'pitch'], [1, -1], /geometry\.detector\.pitch\[1\]: got -1, expected a positive number \(mm\)/],
    [['detector', 'shape'], 'round', /detector\.shape: got "round"/],
    [['detector', 'rows'], 4, /detector\.rows: got 4, expected 1 for a fan beam/],
    [['anglesDeg', 'step'], 0, /anglesDeg\.step: got 0, expected a non-zero step/],
    [['anglesDeg'], [0, 1, 'x'], /anglesDeg\[2\]: got "x", expected a finite number/],
    [['anglesDeg'], undefined, /anglesDeg: got nothing, expected view angles/],
    // 1e999 in a JSON file reads as Infinity; JSON would print it as null.
    [['sourceIsocenter'], JSON.parse('1e999'), /geometry\.sourceIsocenter: got Infinity \(not a finite number\), expected a positive number/],
    [['detector', 'pitch'], JSON.parse('[1e999, 1]'), /detector\.pitch\[0\]: got Infinity \(not a finite number\)/],
    [['detector', 'pitch'], JSON.parse('[1, 2, -1e999]'), /detector\.pitch: got \[1,2,-Infinity \(not a finite number\)\], expected a pair/],
  ])('%j = %j is refused', (path, value, msg) => {
    expect(() => validateGeometry(edit(path as string[], value))).toThrow(InputError);
    expect(() => validateGeometry(edit(path as string[], value))).toThrow(msg);
  });

  it('fills defaults and accepts a pitch given as one number', () => {
    const g = validateGeometry({ kind: 'parallel', detector: { channels: 10, pitch: 0.5 }, anglesDeg: [0, 90] });
    expect(g.detector).toEqual({ shape: 'flat', channels: 10, rows: 1, pitch: [0.5, 0.5], offset: [0, 0] });
  });

  it('checks the geometry against the data sizes', () => {
    const g = validateGeometry(fan);
    expect(() => checkGeometryMatchesData(g, 100, 1, 360)).not.toThrow();
    expect(() => checkGeometryMatchesData(g, 99, 1, 360)).toThrow(/detector\.channels: got 100, expected 99/);
    expect(() => checkGeometryMatchesData(g, 100, 1, 180)).toThrow(/360 views/);
  });

  it('calibrated views need well-formed vectors of the beam kind and matching angle counts', () => {
    const views = [{ focalSpot: [500, 0, 0], detectorCenter: [-500, 0, 0], channelStep: [0, 1, 0] }];
    const g = validateGeometry({ ...fan, anglesDeg: undefined, views });
    expect(g.views![0].rowStep).toEqual([0, 0, 1]); // single row: one row pitch along +z
    expect(() => validateGeometry({ ...fan, views })).toThrow(/as many angles as views/);
    const refused: [unknown, RegExp][] = [
      [[{ ...views[0], channelStep: [0, 0, 0] }], /views\[0\]\.channelStep: got \[0,0,0\], expected a step of the channel pitch, detector\.pitch\[0\] \(1 mm long/],
      [[{ ...views[0], channelStep: [0, 2, 0] }], /views\[0\]\.channelStep: .*this one is 2\.00000 mm/],
      [[{ ...views[0], rayDirection: [-1, 0, 0] }], /views\[0\]\.rayDirection: got \[-1,0,0\], expected one of the keys focalSpot, detectorCenter, channelStep, rowStep \(a fan beam\)/],
      [[{ source: [500, 0, 0], detector: [-500, 0, 0], u: [0, 1, 0], v: [0, 0, 1] }], /views\[0\]\.source: got \[500,0,0\], expected one of the keys focalSpot/],
      [[{ detectorCenter: [-500, 0, 0], channelStep: [0, 1, 0] }], /views\[0\]\.focalSpot: got nothing, expected a vector/],
    ];
    for (const [vs, msg] of refused) expect(() => validateGeometry({ ...fan, anglesDeg: undefined, views: vs })).toThrow(msg);
    const cone = { kind: 'cone', detector: { channels: 10, rows: 4, pitch: [1, 2] }, sourceIsocenter: 500, sourceDetector: 1000 };
    expect(() => validateGeometry({ ...cone, views })).toThrow(/views\[0\]\.rowStep: got nothing, expected the step from one detector row to the next/);
  });

  it('parallel beams give the ray direction under its own key, made unit length', () => {
    const par = { kind: 'parallel', detector: { channels: 10, pitch: 0.5 } };
    const g = validateGeometry({ ...par, views: [{ rayDirection: [0, -3, 0], detectorCenter: [0, 0, 0], channelStep: [0.5, 0, 0] }] });
    expect(g.views![0].rayDirection).toEqual([0, -1, 0]);
    expect(() => validateGeometry({ ...par, views: [{ focalSpot: [0, 500, 0], detectorCenter: [0, 0, 0], channelStep: [0.5, 0, 0] }] }))
      .toThrow(/views\[0\]\.focalSpot: .*expected one of the keys rayDirection, detectorCenter, channelStep, rowStep \(a parallel beam\)/);
    expect(() => validateGeometry({ ...par, views: [{ rayDirection: [0, 0, 0], detectorCenter: [0, 0, 0], channelStep: [0.5, 0, 0] }] })).toThrow(/rayDirection: got \[0,0,0\], expected a non-zero direction/);
  });
});

describe('calibrated views describe the same rays as the circular model', () => {
  // A centred disk of radius r and density mu projects as 2 mu sqrt(r^2 - s^2), s the ray's
  // distance from the centre (elementary geometry): s = u for parallel beams, R sin(atan(u/D))
  // for a flat fan detector.
  const r = 40, mu = 0.02;
  const disk = { name: 'disk', muWater: mu, radius: r, ellipses: [{ cx: 0, cy: 0, a: r, b: r, phiDeg: 0, value: mu }] };
  const chord = (s: number) => (Math.abs(s) < r ? 2 * mu * Math.sqrt(r * r - s * s) : 0);
  const angles = [0, 37, 90, 211];

  it('fan beam: focal spot, detector centre and channel step per view (DEVELOPERS.md, Geometry)', () => {
    const R = 500, D = 900, pitch = 1.5, n = 80;
    const views = angles.map((deg) => {
      const b = (deg * Math.PI) / 180, c = Math.cos(b), s = Math.sin(b);
      return { focalSpot: [R * c, R * s, 0], detectorCenter: [-(D - R) * c, -(D - R) * s, 0], channelStep: [-s * pitch, c * pitch, 0] };
    });
    const g = validateGeometry({ kind: 'fan', detector: { channels: n, pitch }, sourceIsocenter: R, sourceDetector: D, views });
    const sino = analyticSinogram(disk, g);
    for (let v = 0; v < angles.length; v++) {
      for (let k = 0; k < n; k += 7) {
        const u = (k - (n - 1) / 2) * pitch;
        expect(sino[v * n + k]).toBeCloseTo(chord(R * Math.sin(Math.atan(u / D))), 5);
      }
    }
  });

  it('parallel beam: ray direction -(cos b, sin b, 0) through u (-sin b, cos b, 0)', () => {
    const pitch = 1.5, n = 80;
    const views = angles.map((deg) => {
      const b = (deg * Math.PI) / 180, c = Math.cos(b), s = Math.sin(b);
      return { rayDirection: [-c, -s, 0], detectorCenter: [0, 0, 0], channelStep: [-s * pitch, c * pitch, 0] };
    });
    const g = validateGeometry({ kind: 'parallel', detector: { channels: n, pitch }, views });
    const sino = analyticSinogram(disk, g);
    for (let v = 0; v < angles.length; v++) {
      for (let k = 0; k < n; k += 7) expect(sino[v * n + k]).toBeCloseTo(chord((k - (n - 1) / 2) * pitch), 5);
    }
  });
});

describe('view vectors follow DEVELOPERS.md, "Geometry" conventions', () => {
  it('fan: source at (R cos b, R sin b, 0), detector at -(D-R)(cos b, sin b, 0), u = (-sin b, cos b, 0)', () => {
    const g = validateGeometry(fan);
    const v = viewVectors(g);
    const b = (30 * Math.PI) / 180;
    const o = 30 * VIEW_STRIDE;
    expect(v[o]).toBeCloseTo(500 * Math.cos(b), 3);
    expect(v[o + 1]).toBeCloseTo(500 * Math.sin(b), 3);
    expect(v[o + 3]).toBeCloseTo(-500 * Math.cos(b), 3);
    expect(v[o + 6]).toBeCloseTo(-Math.sin(b), 6);
    expect(v[o + 7]).toBeCloseTo(Math.cos(b), 6);
    expect(v[o + 11]).toBe(1);
  });

  it('field of view: R sin(atan(half width / D)) for a flat detector (fan geometry, elementary)', () => {
    const g = validateGeometry(fan);
    expect(fovRadius(g)).toBeCloseTo(500 * Math.sin(Math.atan(50 / 1000)), 6);
    // An offset detector on a full turn covers out to its farther edge; on a half turn to the nearer.
    const off = validateGeometry({ ...fan, detector: { ...fan.detector, offset: [20, 0] } });
    expect(fovRadius(off)).toBeCloseTo(500 * Math.sin(Math.atan(70 / 1000)), 6);
    const offHalf = validateGeometry({ ...off, anglesDeg: { start: 0, step: 1, count: 200 } });
    expect(fovRadius(offHalf)).toBeCloseTo(500 * Math.sin(Math.atan(30 / 1000)), 6);
  });
});
