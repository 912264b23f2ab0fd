// The geometry form's edits: valid edits are kept when another field is wrong, each wrong field
// gets its own message in the page's words (its label, no file keys, no command-line options),
// and a geometry is made only when every field is valid.
import { describe, expect, it } from 'vitest';
import { validateGeometry } from '../../web/core/geometry/validate';
import { checkDraft, draftErrors, draftOf, geometryFromDraft } from '../../web/ui/logic/geometry-draft';

const stored = validateGeometry({
  kind: 'fan', detector: { shape: 'flat', channels: 345, rows: 1, pitch: [1, 1], offset: [0, 0] },
  sourceIsocenter: 600, sourceDetector: 1000, anglesDeg: { start: 0, step: 0.5, count: 720 },
});

describe('the geometry form draft', () => {
  it('marks each wrong field with its own message in the page\'s words, and only those', () => {
    const draft = { ...draftOf(stored), pitchU: '1.2', sourceDetector: '500', step: 'half' };
    const errors = draftErrors(stored, draft);
    expect(Object.keys(errors).sort()).toEqual(['sourceDetector', 'step']);
    expect(errors.sourceDetector).toBe('Source to detector: got 500, expected a distance greater than the source to isocentre distance (600 mm)');
    expect(errors.step).toBe('Angle step: got "half", expected a finite number');
    for (const m of Object.values(errors)) expect(m).not.toMatch(/geometry\.|--|sourceIsocenter|anglesDeg/);
    // Nothing is made from a draft with a wrong field; the valid edit is still in the draft.
    expect(() => checkDraft(stored, draft)).toThrow();
    expect(draft.pitchU).toBe('1.2');
  });

  it('says a value beyond the float range is not finite', () => {
    expect(draftErrors(stored, { ...draftOf(stored), sourceIsocenter: '1e999' }).sourceIsocenter).toBe('Source to isocentre: got Infinity (not a finite number), expected a positive number (mm)');
  });

  it('a rule between fields marks the field it names', () => {
    // Each alone is fine; together the detector lies inside the source circle.
    const errors = draftErrors(stored, { ...draftOf(stored), sourceIsocenter: '900', sourceDetector: '800' });
    expect(errors).toEqual({ sourceDetector: 'Source to detector: got 800, expected a distance greater than the source to isocentre distance (900 mm)' });
  });

  it('gives the edited geometry when every field is valid, keeping what the form does not show', () => {
    const draft = { ...draftOf(stored), pitchU: '1.2', sourceDetector: '1100' };
    expect(draftErrors(stored, draft)).toEqual({});
    const g = checkDraft(stored, draft);
    expect(g.detector.pitch).toEqual([1.2, 1]);
    expect(g.sourceDetector).toBe(1100);
    expect(g.anglesDeg).toEqual({ start: 0, step: 0.5, count: 720 });
    expect(geometryFromDraft(stored, draftOf(stored))).toEqual(JSON.parse(JSON.stringify(stored)));
  });
});
