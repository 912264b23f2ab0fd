// The geometry form's edits as typed, kept field by field: each wrong field gets its own message
// in the page's words (its label, not the file's key), valid edits stay, and a geometry is made
// only when every field is valid. The rules themselves are validateGeometry's (one owner).
import { InputError } from '../../core/errors';
import type { Geometry } from '../../core/geometry/types';
import { checkGeometryMatchesData, validateGeometry } from '../../core/geometry/validate';
import { viewCount } from '../../core/geometry/types';

/** An editable field of the form: its input name, label, unit, and the geometry path validateGeometry names. */
export interface GeometryField {
  name: string;
  label: string;
  unit?: string;
  path: string;
}

export const GEOMETRY_FIELDS: GeometryField[] = [
  { name: 'kind', label: 'Beam', path: 'kind' },
  { name: 'shape', label: 'Detector shape', path: 'detector.shape' },
  { name: 'pitchU', label: 'Channel pitch', unit: 'mm', path: 'detector.pitch[0]' },
  { name: 'pitchV', label: 'Row pitch', unit: 'mm', path: 'detector.pitch[1]' },
  { name: 'offsetU', label: 'Channel offset', unit: 'mm', path: 'detector.offset[0]' },
  { name: 'offsetV', label: 'Row offset', unit: 'mm', path: 'detector.offset[1]' },
  { name: 'sourceIsocenter', label: 'Source to isocentre', unit: 'mm', path: 'sourceIsocenter' },
  { name: 'sourceDetector', label: 'Source to detector', unit: 'mm', path: 'sourceDetector' },
  { name: 'start', label: 'First angle', unit: '°', path: 'anglesDeg.start' },
  { name: 'step', label: 'Angle step', unit: '°', path: 'anglesDeg.step' },
];

/** Paths of checks that concern a field without naming it (rows follow the beam kind). */
const ALSO: Record<string, string> = { 'detector.rows': 'kind', 'detector.pitch': 'pitchU' };

/** The form's text, by input name. */
export type GeometryDraft = Record<string, string>;

/** The stored geometry as the form's text. */
export function draftOf(g: Geometry): GeometryDraft {
  const d = g.detector;
  const a = g.anglesDeg && !Array.isArray(g.anglesDeg) ? g.anglesDeg : undefined;
  const text = (v: number | undefined) => (v === undefined ? '' : String(v));
  return {
    kind: g.kind, shape: d.shape,
    pitchU: text(d.pitch[0]), pitchV: text(d.pitch[1]), offsetU: text(d.offset[0]), offsetV: text(d.offset[1]),
    sourceIsocenter: text(g.sourceIsocenter), sourceDetector: text(g.sourceDetector),
    start: text(a?.start), step: text(a?.step),
  };
}

/** A typed number (1e999 reads as Infinity, which the message calls not finite), the raw text when it is not one (so the message can quote it), or nothing. */
function numberOrText(v: string | undefined): number | string | undefined {
  const t = (v ?? '').trim();
  if (t === '') return undefined;
  const n = Number(t);
  return Number.isNaN(n) ? t : n;
}

/** The geometry JSON the draft describes (channels, rows, views and calibrated vectors as stored). */
export function geometryFromDraft(g: Geometry, draft: GeometryDraft): Record<string, unknown> {
  const d = g.detector;
  const n = (name: string) => numberOrText(draft[name]);
  const out: Record<string, unknown> = {
    kind: draft.kind,
    detector: { shape: draft.shape, channels: d.channels, rows: d.rows, pitch: [n('pitchU'), n('pitchV')], offset: [n('offsetU'), n('offsetV')] },
  };
  if (draft.kind !== 'parallel') {
    out.sourceIsocenter = n('sourceIsocenter');
    out.sourceDetector = n('sourceDetector');
  }
  if (g.views) out.views = g.views;
  if (Array.isArray(g.anglesDeg)) out.anglesDeg = g.anglesDeg;
  else if (g.anglesDeg) out.anglesDeg = { start: n('start'), step: n('step'), count: g.anglesDeg.count };
  return out;
}

/** The field an InputError from validateGeometry is about, or undefined. */
function fieldOf(err: InputError): GeometryField | undefined {
  const path = err.field?.replace(/^geometry\./, '');
  if (path === undefined) return undefined;
  const name = ALSO[path] ?? GEOMETRY_FIELDS.find((f) => f.path === path)?.name;
  return GEOMETRY_FIELDS.find((f) => f.name === name);
}

/** The message in the page's words: the field's label instead of the file's key. */
export function pageWords(err: InputError): string {
  const f = fieldOf(err);
  return f ? err.message.replace(/^geometry\.[\w.[\]]+/, f.label) : err.message.replace(/^geometry\./, '');
}

/** Validates the draft as a geometry of this scan's data; throws InputError. */
export function checkDraft(g: Geometry, draft: GeometryDraft): Geometry {
  const out = validateGeometry(geometryFromDraft(g, draft));
  checkGeometryMatchesData(out, g.detector.channels, g.detector.rows, viewCount(g));
  return out;
}

/**
 * Messages by field name for the draft: each edited field is checked on its own against the
 * stored geometry (so every wrong field is marked, not only the first), then the whole draft
 * (for rules between fields, e.g. the detector beyond the isocentre). Empty when all is valid.
 */
export function draftErrors(g: Geometry, draft: GeometryDraft): Record<string, string> {
  const stored = draftOf(g);
  const errors: Record<string, string> = {};
  const attempt = (d: GeometryDraft) => {
    try {
      checkDraft(g, d);
    } catch (err) {
      if (!(err instanceof InputError)) throw err;
      const f = fieldOf(err);
      const name = f?.name ?? 'form';
      if (!errors[name]) errors[name] = pageWords(err);
    }
  };
  for (const f of GEOMETRY_FIELDS) if (draft[f.name] !== stored[f.name]) attempt({ ...stored, [f.name]: draft[f.name] });
  if (!Object.keys(errors).length) attempt(draft);
  return errors;
}
