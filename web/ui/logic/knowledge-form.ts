// The knowledge panel's typed fields: a known circle (centre, radius, HU, label) and the outline
// ellipse (centre, semi-axes, turn), read from text with a message naming the field at fault,
// and filled from what was drawn (to 0.1 mm).
import type { KnownCircle, Outline } from '../../core/knowledge';
import type { EllipseDraft } from './knowledge-draw';

type Parsed<T> = { value: T; problem?: undefined } | { value?: undefined; problem: string };

/** A number typed in a field, or why not ("Radius: got “-2”, expected a length above 0 mm"). */
export function readNumber(text: string, label: string, kind: 'mm' | 'length' | 'HU' | 'degrees'): Parsed<number> {
  const t = text.trim();
  const v = t === '' ? Number.NaN : Number(t);
  const expected = kind === 'length' ? 'a length above 0 mm' : kind === 'mm' ? 'a position in mm' : kind === 'HU' ? 'a value in HU' : 'an angle in degrees';
  if (!Number.isFinite(v) || (kind === 'length' && !(v > 0))) return { problem: `${label}: got “${t}”, expected ${expected}` };
  return { value: v };
}

export interface CircleFields {
  x: string;
  y: string;
  r: string;
  hu: string;
  label: string;
}

/** The known circle the fields describe. */
export function circleFromFields(f: CircleFields): Parsed<KnownCircle> {
  const parts = [readNumber(f.x, 'Centre x', 'mm'), readNumber(f.y, 'Centre y', 'mm'), readNumber(f.r, 'Radius', 'length'), readNumber(f.hu, 'Value', 'HU')];
  const bad = parts.find((p) => p.problem);
  if (bad?.problem) return { problem: bad.problem };
  const [x, y, r, hu] = parts.map((p) => p.value!);
  const label = f.label.trim();
  return { value: { shape: 'circle', x, y, r, hu, ...(label ? { label } : {}) } };
}

export interface EllipseFields {
  cx: string;
  cy: string;
  a: string;
  b: string;
  angle: string;
}

/** The outline ellipse the fields describe (an empty turn is 0). */
export function ellipseFromFields(f: EllipseFields): Parsed<Extract<Outline, { shape: 'ellipse' }>> {
  const parts = [readNumber(f.cx, 'Centre x', 'mm'), readNumber(f.cy, 'Centre y', 'mm'), readNumber(f.a, 'Semi-axis along x', 'length'), readNumber(f.b, 'Semi-axis along y', 'length'),
    f.angle.trim() === '' ? { value: 0 } : readNumber(f.angle, 'Turn', 'degrees')];
  const bad = parts.find((p) => p.problem);
  if (bad?.problem) return { problem: bad.problem };
  const [cx, cy, a, b, angleDeg] = parts.map((p) => p.value!);
  return { value: { shape: 'ellipse', cx, cy, a, b, ...(angleDeg ? { angleDeg } : {}) } };
}

const mm = (v: number) => String(Number(v.toFixed(1)));

/** The fields of a drawn or suggested ellipse. */
export function fieldsOfEllipse(e: EllipseDraft): EllipseFields {
  return { cx: mm(e.cx), cy: mm(e.cy), a: mm(e.a), b: mm(e.b), angle: e.angleDeg ? mm(e.angleDeg) : '' };
}

/** The position fields of a drawn circle (the value and label stay as typed). */
export function fieldsOfCircle(c: { centre: { x: number; y: number }; radius: number }, keep: Pick<CircleFields, 'hu' | 'label'>): CircleFields {
  return { x: mm(c.centre.x), y: mm(c.centre.y), r: mm(c.radius), hu: keep.hu, label: keep.label };
}
