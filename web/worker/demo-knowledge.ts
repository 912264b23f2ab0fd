// What a user would know about the demo scan's object, to show knowledge at work on it: the
// value of a small region inside the field of view (a 20 mm disc in the heart, muscle at 60 keV
// from the phantom's NIST-based materials) and the body's outline as a tape measure gives it
// (340 mm wide, 240 mm deep: an ellipse, without the arms beside it).
import type { KnownCircle, Outline } from '../core/knowledge';
import { mu60, MU_WATER_60KEV } from '../core/phantoms/materials';
import { THORAX_PARTS } from '../core/phantoms/thorax';

export interface DemoKnowledge {
  region: KnownCircle;
  outline: Outline;
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
    outline: { shape: 'ellipse', cx: body.cx, cy: body.cy, a: body.a, b: body.b },
    regionSource: 'demo: the heart is muscle, whose value at 60 keV a physicist knows',
    outlineSource: `demo: the body measured with a tape, ${2 * body.a} mm wide and ${2 * body.b} mm deep`,
  };
}
