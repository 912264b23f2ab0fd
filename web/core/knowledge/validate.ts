// Checking knowledge from JSON (page form, stored record, CLI): shapes and numbers only. Checks
// against a scan and a grid (inside the field of view, over data, consistent) are in check.ts.
import { InputError } from '../errors';
import { describeOutline, describeRegion } from './describe';
import type { Knowledge, KnownRegion, Outline } from './types';

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function finite(v: unknown, field: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) throw new InputError(`${field}: got ${JSON.stringify(v) ?? String(v)}, expected a finite number`);
  return v;
}

function positive(v: unknown, field: string): number {
  const x = finite(v, field);
  if (!(x > 0)) throw new InputError(`${field}: got ${x}, expected a positive length in mm`);
  return x;
}

function name(v: unknown, field: string): string {
  if (typeof v !== 'string' || v.trim() === '') throw new InputError(`${field}: expected the name of a mask image`);
  return v;
}

/** HU a region may take: from air (-1000) to dense bone and metal-free implants. */
const HU_RANGE: [number, number] = [-1024, 4000];

function knownRegion(v: unknown, i: number): KnownRegion {
  const at = `known region ${i + 1}`;
  if (!isObject(v)) throw new InputError(`${at}: expected {shape: "circle", x, y, r, hu} or {shape: "mask", input, hu}`);
  const hu = finite(v.hu, `${at} hu`);
  if (hu < HU_RANGE[0] || hu > HU_RANGE[1]) throw new InputError(`${at} hu: got ${hu}, expected a value from ${HU_RANGE[0]} to ${HU_RANGE[1]} HU`);
  const label = typeof v.label === 'string' && v.label.trim() ? v.label.trim() : undefined;
  if (v.shape === 'circle') {
    const out: KnownRegion = { shape: 'circle', x: finite(v.x, `${at} x`), y: finite(v.y, `${at} y`), r: positive(v.r, `${at} r`), hu };
    if (v.z !== undefined) {
      if (!Array.isArray(v.z) || v.z.length !== 2) throw new InputError(`${at} z: expected [z0, z1] in mm`);
      const z0 = finite(v.z[0], `${at} z0`), z1 = finite(v.z[1], `${at} z1`);
      if (!(z1 > z0)) throw new InputError(`${at} z: got ${z0} to ${z1} mm, expected z0 < z1`);
      out.z = [z0, z1];
    }
    if (label) out.label = label;
    return out;
  }
  if (v.shape === 'mask') return { shape: 'mask', input: name(v.input, `${at} input`), hu, ...(label ? { label } : {}) };
  throw new InputError(`${at} shape: got ${JSON.stringify(v.shape)}, expected "circle" or "mask"`);
}

function outline(v: unknown): Outline {
  if (!isObject(v)) throw new InputError('outline: expected {shape: "ellipse" | "polygon" | "mask", ...}');
  if (v.shape === 'ellipse') {
    const o: Outline = { shape: 'ellipse', cx: finite(v.cx, 'outline cx'), cy: finite(v.cy, 'outline cy'), a: positive(v.a, 'outline a'), b: positive(v.b, 'outline b') };
    if (v.angleDeg !== undefined) o.angleDeg = finite(v.angleDeg, 'outline angleDeg');
    return o;
  }
  if (v.shape === 'polygon') {
    if (!Array.isArray(v.points) || v.points.length < 3) throw new InputError('outline polygon: expected at least 3 points [x, y] in mm');
    const points = v.points.map((p, k) => {
      if (!Array.isArray(p) || p.length !== 2) throw new InputError(`outline polygon point ${k + 1}: expected [x, y] in mm`);
      return [finite(p[0], `outline polygon point ${k + 1} x`), finite(p[1], `outline polygon point ${k + 1} y`)] as [number, number];
    });
    if (Math.abs(polygonArea(points)) <= 0) throw new InputError(`${describeOutline({ shape: 'polygon', points })}: its points enclose no area`);
    return { shape: 'polygon', points };
  }
  if (v.shape === 'mask') return { shape: 'mask', input: name(v.input, 'outline input') };
  throw new InputError(`outline shape: got ${JSON.stringify(v.shape)}, expected "ellipse", "polygon" or "mask"`);
}

/** Signed area of a polygon (shoelace formula), mm^2. */
export function polygonArea(points: readonly (readonly [number, number])[]): number {
  let s = 0;
  for (let k = 0; k < points.length; k++) {
    const [x0, y0] = points[k], [x1, y1] = points[(k + 1) % points.length];
    s += x0 * y1 - x1 * y0;
  }
  return s / 2;
}

/** Two circles that overlap but give different values contradict each other. */
function checkCirclesAgree(known: KnownRegion[]): void {
  for (let i = 0; i < known.length; i++) {
    for (let j = i + 1; j < known.length; j++) {
      const a = known[i], b = known[j];
      if (a.shape !== 'circle' || b.shape !== 'circle' || a.hu === b.hu) continue;
      const zApart = a.z && b.z && (a.z[1] <= b.z[0] || b.z[1] <= a.z[0]);
      if (!zApart && Math.hypot(a.x - b.x, a.y - b.y) < a.r + b.r) {
        throw new InputError(`${describeRegion(a, i)} and ${describeRegion(b, j)} overlap but give different values: they contradict each other`);
      }
    }
  }
}

/** Checks knowledge from JSON; absent or empty lists give undefined. */
export function validateKnowledge(input: unknown): Knowledge | undefined {
  if (input === undefined || input === null) return undefined;
  if (!isObject(input)) throw new InputError('recipe knowledge: expected {known: [...], outline: {...}}');
  const out: Knowledge = {};
  if (input.known !== undefined) {
    if (!Array.isArray(input.known)) throw new InputError('recipe knowledge known: expected a list of regions');
    if (input.known.length > 64) throw new InputError(`recipe knowledge known: got ${input.known.length} regions, expected at most 64`);
    const known = input.known.map(knownRegion);
    checkCirclesAgree(known);
    if (known.length) out.known = known;
  }
  if (input.outline !== undefined) out.outline = outline(input.outline);
  return out.known || out.outline ? out : undefined;
}
