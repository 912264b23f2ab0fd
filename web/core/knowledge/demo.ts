// What a user would know about the demo scan's object, to show knowledge at work on it: the
// value of a small region inside the field of view (a 20 mm disc in the heart, muscle at 60 keV
// from the phantom's NIST-based materials) and the body's outline as a tape measure gives it: an
// ellipse a little outside the skin (2 mm each way, not the truth's exact contour), without the
// arms beside it. The page's demo and `rimfill demo` both use it.
import { mu60, MU_WATER_60KEV } from '../phantoms/materials';
import { THORAX_PARTS } from '../phantoms/thorax';
import type { KnownCircle, Outline } from './types';

type EllipseOutline = Extract<Outline, { shape: 'ellipse' }>;

/** How far outside the skin the tape-measure ellipse lies, mm (our own scenario). */
const TAPE_MARGIN_MM = 2;

export interface DemoKnowledge {
  region: KnownCircle;
  outline: EllipseOutline;
  /** Where each came from, in words. */
  regionSource: string;
  outlineSource: string;
}

/** The demo's known region and outline. */
export function demoKnowledge(): DemoKnowledge {
  const heart = THORAX_PARTS.find((p) => p.name === 'heart')!;
  const body = THORAX_PARTS.find((p) => p.name === 'body')!;
  // HU = 1000 (mu - mu_water) / mu_water (REFERENCES.md [hu-definition]).
  const hu = Math.round((1000 * (mu60(heart.material) - MU_WATER_60KEV)) / MU_WATER_60KEV);
  return {
    region: { shape: 'circle', x: heart.cx, y: heart.cy, r: 10, hu, label: 'heart' },
    outline: { shape: 'ellipse', cx: body.cx, cy: body.cy, a: body.a + TAPE_MARGIN_MM, b: body.b + TAPE_MARGIN_MM },
    regionSource: 'demo: the heart is muscle, whose value at 60 keV a physicist knows',
    outlineSource: `demo: the body measured with a tape, ${2 * (body.a + TAPE_MARGIN_MM)} mm wide and ${2 * (body.b + TAPE_MARGIN_MM)} mm deep`,
  };
}
