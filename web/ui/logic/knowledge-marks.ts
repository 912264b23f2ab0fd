// The marks drawn over the image panels from a scan's knowledge: each known region (circle, or a
// mask's boundary) with its number, the outline, the outline the data suggest, and the ellipse,
// polygon or circle being drawn.
import type { SuggestedOutline } from '../../core/completion/suggested-outline';
import type { ScanKnowledge } from '../../store/records';
import { ellipsePoints, outlineRings, type EllipseDraft, type Mark, type PolygonDraft } from './knowledge-draw';

export interface MarkInputs {
  knowledge?: ScanKnowledge;
  suggested?: SuggestedOutline | null;
  ellipse?: EllipseDraft | null;
  polygon?: PolygonDraft;
}

/** Every mark, in drawing order (the suggestion under the user's own). */
export function knowledgeMarks(m: MarkInputs): Mark[] {
  const out: Mark[] = [];
  if (m.suggested) out.push({ style: 'suggested', rings: [ellipsePoints(m.suggested.ellipse)], closed: true });
  const k = m.knowledge;
  const contours = Object.fromEntries((k?.masks ?? []).map((x) => [x.name, x.contour]));
  if (k?.outline) out.push({ style: 'outline', rings: outlineRings(k.outline.outline, contours), closed: true });
  k?.regions.forEach((s, i) => {
    const r = s.region;
    if (r.shape === 'circle') out.push({ style: 'known', rings: [ellipsePoints({ cx: r.x, cy: r.y, a: r.r, b: r.r }, 48)], closed: true, label: String(i + 1), at: { x: r.x, y: r.y } });
    else {
      const rings = (contours[r.input] ?? []).map((ring) => ring.map(([x, y]) => ({ x, y })));
      out.push({ style: 'known', rings, closed: true, label: String(i + 1), at: rings[0]?.[0] });
    }
  });
  if (m.ellipse && m.ellipse.a > 0 && m.ellipse.b > 0) out.push({ style: 'draft', rings: [ellipsePoints(m.ellipse)], closed: true });
  if (m.polygon?.points.length) out.push({ style: 'draft', rings: [m.polygon.points], closed: m.polygon.closed });
  return out;
}

