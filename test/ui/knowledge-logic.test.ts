// The knowledge panel's logic without a browser: drawing an ellipse and a polygon, the marks
// drawn over the panels, the typed fields (with a message naming the field at fault), the
// recipe's knowledge from the form's ticks, the demo's runs, and the method guidance (rows taken
// from the guidance table, not invented). Outside checks: an ellipse's points satisfy
// (x/a)^2 + (y/b)^2 = 1 and a polygon's area is the shoelace formula (textbook).
import { describe, expect, it } from 'vitest';
import { GUIDANCE } from '../../web/core/knowledge/guidance';
import type { TruncationSummary } from '../../web/core/truncation/detect';
import type { ResultMeta, ScanKnowledge } from '../../web/store/records';
import { demoRuns } from '../../web/ui/logic/demo-runs';
import { guidanceView } from '../../web/ui/logic/guidance-view';
import { addPolygonPoint, closePolygon, EMPTY_POLYGON, ellipseFromDrag, ellipsePoints, undoPolygonPoint } from '../../web/ui/logic/knowledge-draw';
import { circleFromFields, ellipseFromFields, fieldsOfCircle, fieldsOfEllipse } from '../../web/ui/logic/knowledge-form';
import { knowledgeMarks } from '../../web/ui/logic/knowledge-marks';
import { knowledgeItems, knowledgeKind, knowledgeProblem, OUTLINE_ITEM, recipeKnowledge } from '../../web/ui/logic/recipe-knowledge';

const knowledge: ScanKnowledge = {
  regions: [
    { id: 'r1', region: { shape: 'circle', x: 4, y: 30, r: 10, hu: 44, label: 'heart' }, source: 'drawn on “FBP”' },
    { id: 'r2', region: { shape: 'mask', input: 'fat.nrrd', hu: -100 }, source: 'mask file fat.nrrd' },
  ],
  outline: { outline: { shape: 'ellipse', cx: 0, cy: 0, a: 170, b: 120 }, source: 'typed' },
  masks: [{ id: 'm1', name: 'fat.nrrd', grid: { nx: 4, ny: 4, dx: 1, dy: 1, cx: 0, cy: 0 }, pixels: 4, contour: [[[-1, -1], [1, -1], [1, 1], [-1, 1]]], source: 'mask file fat.nrrd' }],
};

describe('drawing the outline', () => {
  it('an ellipse dragged from its centre: semi-axes from the corner, whichever way the drag goes; its points lie on it', () => {
    expect(ellipseFromDrag({ x: 10, y: -5 }, { x: -40, y: 25 })).toEqual({ cx: 10, cy: -5, a: 50, b: 30 });
    const e = { cx: 10, cy: -5, a: 50, b: 30, angleDeg: 30 };
    const t = (30 * Math.PI) / 180;
    for (const p of ellipsePoints(e, 12)) {
      const dx = p.x - 10, dy = p.y + 5;
      const u = dx * Math.cos(t) + dy * Math.sin(t), v = -dx * Math.sin(t) + dy * Math.cos(t);
      expect((u / 50) ** 2 + (v / 30) ** 2).toBeCloseTo(1, 12);
    }
  });

  it('a polygon clicked corner by corner: a second press on the last corner adds nothing, a click on the first closes it', () => {
    let d = EMPTY_POLYGON;
    for (const p of [{ x: 0, y: 0 }, { x: 100, y: 0 }, { x: 100, y: 0.5 }, { x: 100, y: 80 }, { x: 0, y: 80 }]) d = addPolygonPoint(d, p, 2);
    expect(d.points).toHaveLength(4);
    expect(d.closed).toBe(false);
    d = addPolygonPoint(d, { x: 1, y: 1 }, 2);
    expect(d.closed).toBe(true);
    expect(d.points).toHaveLength(4);
    // A click after closing starts again; undo takes the last corner away.
    expect(addPolygonPoint(d, { x: 5, y: 5 }, 2)).toEqual({ points: [{ x: 5, y: 5 }], closed: false });
    expect(undoPolygonPoint(d).points).toHaveLength(3);
  });

  it('a polygon of fewer than 3 corners, or of no area, does not close and says why', () => {
    expect(closePolygon({ points: [{ x: 0, y: 0 }, { x: 1, y: 1 }], closed: false }).problem).toBe('a polygon needs at least 3 corners; it has 2');
    expect(closePolygon({ points: [{ x: 0, y: 0 }, { x: 1, y: 1 }, { x: 2, y: 2 }], closed: false }).problem).toBe('the corners enclose no area');
    expect(addPolygonPoint({ points: [{ x: 0, y: 0 }, { x: 1, y: 1 }, { x: 2, y: 2 }], closed: false }, { x: 0, y: 0.5 }, 1).closed).toBe(false);
  });

  it('marks: the suggestion under the outline, each known region numbered (a mask by its stored boundary), then what is being drawn', () => {
    const suggested = { ellipse: { shape: 'ellipse' as const, cx: 0, cy: 0, a: 160, b: 110, angleDeg: 0 }, polygon: { shape: 'polygon' as const, points: [] }, option: '', estimatedShare: 0.5 };
    const marks = knowledgeMarks({ knowledge, suggested, ellipse: { cx: 0, cy: 0, a: 5, b: 0 }, polygon: { points: [{ x: 0, y: 0 }, { x: 5, y: 0 }], closed: false } });
    expect(marks.map((m) => [m.style, m.label])).toEqual([['suggested', undefined], ['outline', undefined], ['known', '1'], ['known', '2'], ['draft', undefined]]);
    expect(marks[3].rings[0]).toEqual([{ x: -1, y: -1 }, { x: 1, y: -1 }, { x: 1, y: 1 }, { x: -1, y: 1 }]);
    expect(marks[4].closed).toBe(false); // the polygon being clicked; the flat ellipse is not drawn
  });
});

describe('typed fields', () => {
  it('a known circle from its fields, the label trimmed; the drawn circle fills the position and keeps the value typed', () => {
    expect(circleFromFields({ x: '4', y: ' 30 ', r: '10', hu: '44', label: ' heart ' }).value).toEqual({ shape: 'circle', x: 4, y: 30, r: 10, hu: 44, label: 'heart' });
    const typed = { x: '', y: '', r: '', hu: '44', label: 'heart' };
    expect(fieldsOfCircle({ centre: { x: 4.04, y: 29.96 }, radius: 10.123 }, typed)).toEqual({ x: '4', y: '30', r: '10.1', hu: '44', label: 'heart' });
  });

  it('each field at fault is named with what it got and what it expects', () => {
    expect(circleFromFields({ x: 'a', y: '0', r: '1', hu: '0', label: '' }).problem).toBe('Centre x: got “a”, expected a position in mm');
    expect(circleFromFields({ x: '0', y: '0', r: '-1', hu: '0', label: '' }).problem).toBe('Radius: got “-1”, expected a length above 0 mm');
    expect(circleFromFields({ x: '0', y: '0', r: '1', hu: '', label: '' }).problem).toBe('Value: got “”, expected a value in HU');
    expect(ellipseFromFields({ cx: '0', cy: '0', a: '170', b: '0', angle: '' }).problem).toBe('Semi-axis along y: got “0”, expected a length above 0 mm');
    expect(ellipseFromFields({ cx: '0', cy: '0', a: '170', b: '120', angle: 'x' }).problem).toBe('Turn: got “x”, expected an angle in degrees');
  });

  it('an ellipse from its fields (no turn when empty or 0), and the fields of a suggested one to 0.1 mm', () => {
    expect(ellipseFromFields({ cx: '0', cy: '-2', a: '170', b: '120', angle: '' }).value).toEqual({ shape: 'ellipse', cx: 0, cy: -2, a: 170, b: 120 });
    expect(ellipseFromFields({ cx: '0', cy: '0', a: '170', b: '120', angle: '12.5' }).value?.angleDeg).toBe(12.5);
    expect(fieldsOfEllipse({ cx: 0.04, cy: -1.96, a: 171.26, b: 119.9, angleDeg: 0 })).toEqual({ cx: '0', cy: '-2', a: '171.3', b: '119.9', angle: '' });
  });
});

describe("the recipe's knowledge", () => {
  it('every item unless unticked, in order; nothing left gives no knowledge', () => {
    expect(knowledgeItems(knowledge).map((i) => i.key)).toEqual(['r1', 'r2', OUTLINE_ITEM]);
    expect(knowledgeItems(knowledge)[0].words).toBe('known region 1 "heart" (circle at 4, 30 mm, r 10 mm, 44 HU)');
    expect(recipeKnowledge(knowledge, new Set(['r2']))).toEqual({ known: [knowledge.regions[0].region], outline: knowledge.outline!.outline });
    expect(recipeKnowledge(knowledge, new Set(['r1', 'r2']))).toEqual({ outline: knowledge.outline!.outline });
    expect(recipeKnowledge(knowledge, new Set(['r1', 'r2', OUTLINE_ITEM]))).toBeUndefined();
    expect(recipeKnowledge(undefined, new Set())).toBeUndefined();
  });

  it('names the kind of knowledge as the guidance does, and says why FBP without a correction cannot use it', () => {
    expect(knowledgeKind(undefined)).toBe('nothing');
    expect(knowledgeKind({ known: [knowledge.regions[0].region] })).toBe('a known region');
    expect(knowledgeKind({ outline: knowledge.outline!.outline })).toBe('the outline');
    expect(knowledgeKind(recipeKnowledge(knowledge, new Set()))).toBe('a known region and the outline');
    expect(knowledgeProblem({ method: 'fbp', extend: 'none', knowledge: {} })).toMatch(/^known regions and the outline work by adjusting a truncation correction: choose one/);
    expect(knowledgeProblem({ method: 'fbp', knowledge: {} })).not.toBe('');
    expect(knowledgeProblem({ method: 'fbp', extend: 'water', knowledge: {} })).toBe('');
    expect(knowledgeProblem({ method: 'fbp', extend: 'none' })).toBe('');
  });

  it("the demo's runs (Hann window): FBP + water unless stored so on that grid, then fitted to the regions, then extended from the outline", () => {
    const grid = { size: 576, pixel: 1 };
    const names = demoRuns(knowledge, [], grid).map((r) => r.name);
    expect(names).toEqual([
      'FBP, water cylinder, hann, 576 px × 1 mm',
      'FBP, water cylinder, 2 known regions, hann, 576 px × 1 mm',
      'FBP, outline filled with water, hann, 576 px × 1 mm',
    ]);
    const result = (filter: string) => ({ recipe: { method: 'fbp', extend: 'water', filter, grid }, grid: { nx: 576, ny: 576, dx: 1, dy: 1, cx: 0, cy: 0 } }) as unknown as ResultMeta;
    const water = result('hann');
    expect(demoRuns(knowledge, [result('ramp')], grid)).toHaveLength(3);
    expect(demoRuns(knowledge, [water], grid)).toHaveLength(2);
    expect(demoRuns({ regions: [], masks: [] }, [water], grid)).toEqual([]);
  });
});

describe('method guidance', () => {
  const summary = (fov: number, object: number, left: number, right: number): TruncationSummary => ({
    truncatedFraction: Math.max(left, right), leftFraction: left, rightFraction: right, worstSide: 'left',
    maxExtentMm: { left: 110, right: 95 }, meanExtentMm: { left: 0, right: 0 }, objectDiameterMm: object, objectRadiusMm: object / 2, fovDiameterMm: fov,
  });

  it("says the scan's truncation in one line; every choice of the table with its figures as measured, the nearest truncation and the user's row marked", () => {
    const v = guidanceView(summary(142, 340, 1, 1), 'a known region');
    expect(v.scan).toBe("Severe truncation: the field of view (142 mm) covers 42% of the object's estimated width (340 mm), cut off on both sides, the object reaching up to 110 mm beyond the edges.");
    expect(v.given).toBe('You have given a known region.');
    // Every row of the table appears once, with its own figures (nothing invented).
    const shown = v.choices.flatMap((c) => c.figures.map((f) => `${f.severity}|${c.knowledge}|${c.choose}|${f.measured}|${f.note ?? ''}`));
    expect(shown.sort()).toEqual(GUIDANCE.map((r) => `${r.severity}|${r.knowledge}|${r.choose}|${r.measured}|${r.note ?? ''}`).sort());
    expect(v.choices.map((c) => c.knowledge)).toEqual(['nothing', 'a known region', 'the outline', 'a known region and the outline']);
    expect(v.choices.filter((c) => c.yours).map((c) => c.choose)).toEqual(['FBP fitted to the region']);
    expect(v.choices.every((c) => c.figures.filter((f) => f.nearest).every((f) => f.severity === 'severe'))).toBe(true);
    expect(v.note).toBeUndefined();
  });

  it('moderate truncation marks the demo scan figures; mild says water is usually enough; no truncation needs nothing', () => {
    const moderate = guidanceView(summary(204, 340, 1, 1), 'nothing');
    const near = moderate.choices.flatMap((c) => c.figures.filter((f) => f.nearest));
    expect(near.length).toBe(4);
    expect(near.every((f) => f.severity === 'moderate' && /^demo scan \d+ \[\d+\]$/.test(f.measured))).toBe(true);
    const mild = guidanceView(summary(300, 340, 1, 0), 'the outline');
    expect(mild.scan).toMatch(/^Mild truncation: .* cut off on one side/);
    expect(mild.note).toMatch(/^Mild truncation: FBP with water cylinder extension is usually enough\./);
    const none = guidanceView(summary(400, 340, 0, 0), 'nothing');
    expect(none.choices).toEqual([]);
    expect(none.scan).toBe('No view is cut off: the field of view (400 mm) holds the object.');
  });
});
