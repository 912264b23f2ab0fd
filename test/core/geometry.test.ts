import { describe, expect, it } from 'vitest';
import { validateGeometry, checkGeometryMatchesData } from '../../web/core/geometry/validate';
import { fovRadius, viewVectors, VIEW_STRIDE } from '../../web/core/geometry/view-vectors';
import { InputError } from '../../web/core/errors';

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
    [['sourceDetector'], 400, /geometry\.sourceDetector: got 400, expected a distance greater than sourceIsocenter \(500 mm\)/],
    [['sourceIsocenter'], -5, /geometry\.sourceIsocenter: got -5, expected a positive number \(mm\)/],
    [['detector', 'channels'], 0, /geometry\.detector\.channels: got 0, expected a whole number/],
    [['detector', 'channels'], 10.5, /detector\.channels: got 10\.5/],
    [['detector', 'pitch'], [1, -1], /geometry\.detector\.pitch\[1\]: got -1, expected a positive number \(mm\)/],
    [['detector', 'shape'], 'round', /detector\.shape: got "round"/],
    [['detector', 'rows'], 4, /detector\.rows: got 4, expected 1 for a fan beam/],
    [['anglesDeg', 'step'], 0, /anglesDeg\.step: got 0, expected a non-zero step/],
    [['anglesDeg'], [0, 1, 'x'], /anglesDeg\[2\]: got "x", expected a finite number/],
    [['anglesDeg'], undefined, /anglesDeg: got nothing, expected view angles/],
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

  it('calibrated views need well-formed vectors and matching angle counts', () => {
    const views = [{ source: [500, 0, 0], detector: [-500, 0, 0], u: [0, 1, 0], v: [0, 0, 1] }];
    expect(validateGeometry({ ...fan, anglesDeg: undefined, views }).views).toHaveLength(1);
    expect(() => validateGeometry({ ...fan, views })).toThrow(/as many angles as views/);
    expect(() => validateGeometry({ ...fan, anglesDeg: undefined, views: [{ ...views[0], u: [0, 0, 0] }] })).toThrow(/views\[0\]\.u: got \[0,0,0\], expected a non-zero vector/);
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
