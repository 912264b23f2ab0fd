// Validation of geometry descriptions from files, forms and the command line. Every message
// names the field, the value received and what was expected.
import { InputError } from '../errors';
import type { AngleRange, DetectorSpec, Geometry, GeometryKind, Vec3, ViewVectorSpec } from './types';

type Json = unknown;

const MAX_CHANNELS = 100_000;
const MAX_ROWS = 100_000;
const MAX_VIEWS = 1_000_000;

/** Marks a non-finite number inside JSON text (JSON itself would write null). */
const NOT_FINITE = '~not-finite~';

function show(v: Json): string {
  if (typeof v === 'string') return JSON.stringify(v);
  if (v === undefined) return 'nothing';
  // 1e999 in a JSON file reads as Infinity: say so rather than print JSON's "null".
  if (typeof v === 'number' && !Number.isFinite(v)) return `${v} (not a finite number)`;
  const s = JSON.stringify(v, (_, x) => (typeof x === 'number' && !Number.isFinite(x) ? `${NOT_FINITE}${x}` : x))
    ?.replace(new RegExp(`"${NOT_FINITE}(-?Infinity|NaN)"`, 'g'), '$1 (not a finite number)');
  return s === undefined ? String(v) : s.length > 60 ? `${s.slice(0, 57)}...` : s;
}

function fail(field: string, got: Json, expected: string): never {
  throw new InputError(`geometry.${field}: got ${show(got)}, expected ${expected}`, { field: `geometry.${field}` });
}

function isObject(v: Json): v is Record<string, Json> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function finite(v: Json, field: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) fail(field, v, 'a finite number');
  return v;
}

function positive(v: Json, field: string, unit: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) fail(field, v, `a positive number (${unit})`);
  return v;
}

function count(v: Json, field: string, max: number): number {
  if (typeof v !== 'number' || !Number.isInteger(v) || v < 1 || v > max) {
    fail(field, v, `a whole number from 1 to ${max}`);
  }
  return v;
}

function pair(v: Json, field: string, each: (x: Json, f: string) => number, fallback?: [number, number]): [number, number] {
  if (v === undefined && fallback) return fallback;
  if (typeof v === 'number') return [each(v, field), each(v, field)];
  if (!Array.isArray(v) || v.length !== 2) fail(field, v, 'a pair [u, v] of numbers');
  return [each(v[0], `${field}[0]`), each(v[1], `${field}[1]`)];
}

function vec3(v: Json, field: string): Vec3 {
  if (!Array.isArray(v) || v.length !== 3) fail(field, v, 'a vector [x, y, z] in mm');
  return [finite(v[0], `${field}[0]`), finite(v[1], `${field}[1]`), finite(v[2], `${field}[2]`)];
}

function validateDetector(d: Json, kind: string): DetectorSpec {
  if (!isObject(d)) fail('detector', d, 'an object with shape, channels, rows, pitch, offset');
  const shape = d.shape ?? 'flat';
  if (shape !== 'flat' && shape !== 'curved') fail('detector.shape', shape, '"flat" or "curved"');
  if (shape === 'curved' && kind !== 'fan') fail('detector.shape', shape, `"flat" for a ${kind} beam (curved detectors are for fan beams)`);
  const channels = count(d.channels, 'detector.channels', MAX_CHANNELS);
  const rows = d.rows === undefined ? 1 : count(d.rows, 'detector.rows', MAX_ROWS);
  if (kind !== 'cone' && rows !== 1) fail('detector.rows', rows, `1 for a ${kind} beam (use kind "cone" for several rows)`);
  const pitch = pair(d.pitch, 'detector.pitch', (x, f) => positive(x, f, 'mm'));
  const offset = pair(d.offset, 'detector.offset', finite, [0, 0]);
  return { shape, channels, rows, pitch, offset };
}

function validateAngles(a: Json): AngleRange | number[] {
  if (Array.isArray(a)) {
    if (a.length < 1 || a.length > MAX_VIEWS) fail('anglesDeg', `${a.length} angles`, `1 to ${MAX_VIEWS} angles`);
    return a.map((x, i) => finite(x, `anglesDeg[${i}]`));
  }
  if (!isObject(a)) fail('anglesDeg', a, 'a list of angles or {start, step, count} in degrees');
  const start = finite(a.start ?? 0, 'anglesDeg.start');
  const step = finite(a.step, 'anglesDeg.step');
  if (step === 0) fail('anglesDeg.step', step, 'a non-zero step in degrees');
  return { start, step, count: count(a.count, 'anglesDeg.count', MAX_VIEWS) };
}

const VIEW_KEYS = {
  beam: ['focalSpot', 'detectorCenter', 'channelStep', 'rowStep'],
  parallel: ['rayDirection', 'detectorCenter', 'channelStep', 'rowStep'],
};

/** A step vector whose length must be the detector pitch (relative tolerance 1e-3). */
function step(v: Json, field: string, pitch: number, pitchField: string): Vec3 {
  const s = vec3(v, field);
  const len = Math.hypot(...s);
  if (!(Math.abs(len - pitch) <= 1e-3 * pitch)) {
    fail(field, s, `a step of the ${pitchField} (${pitch} mm long; this one is ${len.toPrecision(6)} mm)`);
  }
  return s;
}

/**
 * Calibrated views: fan and cone beams give {focalSpot, detectorCenter, channelStep, rowStep},
 * parallel beams {rayDirection, detectorCenter, channelStep, rowStep}; rowStep may be left out
 * on single-row detectors (then one row pitch along +z).
 */
function validateViews(vs: Json, kind: GeometryKind, d: DetectorSpec): ViewVectorSpec[] {
  if (!Array.isArray(vs) || vs.length < 1 || vs.length > MAX_VIEWS) fail('views', vs, `a list of 1 to ${MAX_VIEWS} views`);
  const keys = kind === 'parallel' ? VIEW_KEYS.parallel : VIEW_KEYS.beam;
  return vs.map((v, i) => {
    const at = `views[${i}]`;
    if (!isObject(v)) fail(at, v, `an object {${keys.join(', ')}}`);
    const unknown = Object.keys(v).find((k) => !keys.includes(k));
    if (unknown !== undefined) fail(`${at}.${unknown}`, v[unknown], `one of the keys ${keys.join(', ')} (a ${kind} beam)`);
    if (v.rowStep === undefined && d.rows > 1) fail(`${at}.rowStep`, undefined, 'the step from one detector row to the next (mm)');
    const beam: Partial<ViewVectorSpec> = {};
    if (kind === 'parallel') {
      const r = vec3(v.rayDirection, `${at}.rayDirection`);
      const len = Math.hypot(...r);
      if (!(len > 0)) fail(`${at}.rayDirection`, r, 'a non-zero direction');
      beam.rayDirection = [r[0] / len, r[1] / len, r[2] / len];
    } else {
      beam.focalSpot = vec3(v.focalSpot, `${at}.focalSpot`);
    }
    const out: ViewVectorSpec = {
      ...beam,
      detectorCenter: vec3(v.detectorCenter, `${at}.detectorCenter`),
      channelStep: step(v.channelStep, `${at}.channelStep`, d.pitch[0], 'channel pitch, detector.pitch[0]'),
      rowStep: v.rowStep === undefined ? [0, 0, d.pitch[1]] : step(v.rowStep, `${at}.rowStep`, d.pitch[1], 'row pitch, detector.pitch[1]'),
    };
    return out;
  });
}

/**
 * Checks a geometry description (parsed JSON) and returns a normalized copy: defaults filled
 * (rows 1, offset [0,0], shape flat), numbers checked, distances consistent.
 * Throws InputError naming the first field that is wrong.
 */
export function validateGeometry(g: Json): Geometry {
  if (!isObject(g)) fail('', g, 'an object with kind, detector and anglesDeg');
  const kind = g.kind;
  if (kind !== 'parallel' && kind !== 'fan' && kind !== 'cone') fail('kind', kind, '"parallel", "fan" or "cone"');
  const detector = validateDetector(g.detector, kind);
  const out: Geometry = { kind, detector };
  if (kind !== 'parallel') {
    const r = positive(g.sourceIsocenter, 'sourceIsocenter', 'mm');
    const d = positive(g.sourceDetector, 'sourceDetector', 'mm');
    if (d <= r) fail('sourceDetector', d, `a distance greater than the source to isocentre distance (${r} mm)`);
    out.sourceIsocenter = r;
    out.sourceDetector = d;
    if (detector.shape === 'curved') {
      const fan = (detector.channels * detector.pitch[0]) / d;
      if (fan >= Math.PI) fail('detector.pitch', detector.pitch[0], `an arc shorter than 180 degrees at ${d} mm (got ${((fan * 180) / Math.PI).toFixed(1)} degrees)`);
    }
  }
  if (g.views !== undefined) out.views = validateViews(g.views, kind, detector);
  if (g.anglesDeg !== undefined) out.anglesDeg = validateAngles(g.anglesDeg);
  if (!out.views && !out.anglesDeg) fail('anglesDeg', undefined, 'view angles (or calibrated "views")');
  if (out.views && out.anglesDeg) {
    const n = Array.isArray(out.anglesDeg) ? out.anglesDeg.length : out.anglesDeg.count;
    if (n !== out.views.length) fail('anglesDeg', `${n} angles`, `as many angles as views (${out.views.length})`);
  }
  return out;
}

/** Checks that the geometry describes the given projection array sizes [channels, rows, views]. */
export function checkGeometryMatchesData(g: Geometry, channels: number, rows: number, views: number): void {
  const nViews = g.views ? g.views.length : Array.isArray(g.anglesDeg) ? g.anglesDeg.length : g.anglesDeg!.count;
  if (g.detector.channels !== channels) fail('detector.channels', g.detector.channels, `${channels} (the data has ${channels} channels)`);
  if (g.detector.rows !== rows) fail('detector.rows', g.detector.rows, `${rows} (the data has ${rows} rows)`);
  if (nViews !== views) fail('anglesDeg', `${nViews} views`, `${views} views (the number of projections in the data)`);
}
