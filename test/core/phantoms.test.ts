import { describe, expect, it } from 'vitest';
import { inside } from '../../web/core/phantoms/ellipse';
import { mu60, MU_WATER_60KEV } from '../../web/core/phantoms/materials';
import { thorax } from '../../web/core/phantoms/thorax';
import { sheppLogan } from '../../web/core/phantoms/shepp-logan';
import { squareGrid } from '../../web/core/image';
import { rasterize } from '../../web/core/phantoms/ellipse';

describe('materials (NIST SRD 126, 60 keV)', () => {
  // REFERENCES.md [nist-srd126]: linear mu at 60 keV, 1/mm.
  it.each([
    ['water', 0.02059],
    ['softTissue', 0.02171],
    ['muscle', 0.0215],
    ['corticalBone', 0.06044],
    ['adipose', 0.01875],
  ] as const)('%s: %f /mm', (m, mu) => expect(mu60(m)).toBeCloseTo(mu, 5));

  it('inflated lung (0.26 g/cm3, ICRU 46 from memory) reads about -740 HU', () => {
    const hu = (1000 * (mu60('lungTissue') - MU_WATER_60KEV)) / MU_WATER_60KEV;
    expect(hu).toBeGreaterThan(-800);
    expect(hu).toBeLessThan(-700);
  });
});

describe('thorax demo phantom', () => {
  const p = thorax();
  it('every value is a tissue of the NIST table (parts lie inside their parent)', () => {
    const allowed = ['water', 'softTissue', 'muscle', 'adipose', 'corticalBone', 'lungTissue'].map((m) => mu60(m as 'water'));
    const img = rasterize(p, squareGrid(600, 1), 1);
    for (const v of img) {
      if (v === 0) continue;
      expect(allowed.some((a) => Math.abs(a - v) < 1e-6)).toBe(true);
    }
  });

  it('is wider than a small detector: body 340 mm, with arms about 560 mm; radius bound holds', () => {
    const onAxis = (x: number) => p.ellipses.some((e) => inside(e, x, 0));
    expect(onAxis(168) && !onAxis(185)).toBe(true);
    expect(onAxis(278) && !onAxis(282)).toBe(true);
    expect(p.radius).toBeGreaterThan(280);
    expect(p.radius).toBeLessThan(283);
  });
});

describe('Shepp-Logan', () => {
  it('original total mass is 2.20175669 in table units (REFERENCES.md [ellipse-projection])', () => {
    const p = sheppLogan('original', 1, 1);
    const mass = p.ellipses.reduce((s, e) => s + e.value * Math.PI * e.a * e.b, 0);
    expect(mass).toBeCloseTo(2.20175669, 7);
  });
  it('modified total mass is 0.49526460 (REFERENCES.md [ellipse-projection])', () => {
    const p = sheppLogan('modified', 1, 1);
    expect(p.ellipses.reduce((s, e) => s + e.value * Math.PI * e.a * e.b, 0)).toBeCloseTo(0.4952646, 7);
  });
});
