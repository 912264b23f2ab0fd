// Rimfill's demo object: an invented adult thorax slice with arms at the sides, built from
// ellipses with attenuation from NIST data (materials.ts). Wider than a small detector's field
// of view, so a scan of it is truncated: the body is 340 mm wide, 560 mm with the arms.
// Anterior is +y; the patient's right is -x (radiological view).
import { boundingRadius, type Ellipse, type EllipsePhantom } from './ellipse';
import { mu60, MU_WATER_60KEV, type Material } from './materials';

interface Part {
  name: string;
  /** Part it sits in ('' for air); its value is replaced by this part's material. */
  within: string;
  material: Material;
  cx: number;
  cy: number;
  a: number;
  b: number;
  phiDeg?: number;
}

/** Distance from the origin to the boundary of an axis-aligned ellipse along direction t. */
function boundary(cx: number, cy: number, a: number, b: number, t: number): number {
  // Solve |(r cos t - cx)/a|^2 + |(r sin t - cy)/b|^2 = 1 for the positive root r.
  const c = Math.cos(t) / a, s = Math.sin(t) / b, px = cx / a, py = cy / b;
  const A = c * c + s * s, B = -2 * (c * px + s * py), C = px * px + py * py - 1;
  return (-B + Math.sqrt(B * B - 4 * A * C)) / (2 * A);
}

function ribs(): Part[] {
  const out: Part[] = [];
  // Ten ribs midway between the chest cavity and the outer edge of the chest wall.
  for (const deg of [30, 55, 80, 100, 125, 150, 210, 235, 305, 330]) {
    const t = (deg * Math.PI) / 180;
    const r = (boundary(0, CAVITY.cy, CAVITY.a, CAVITY.b, t) + boundary(0, 0, 160, 110, t)) / 2;
    out.push({ name: `rib${deg}`, within: 'wall', material: 'corticalBone', cx: r * Math.cos(t), cy: r * Math.sin(t), a: 6, b: 3.5, phiDeg: deg + 90 });
  }
  return out;
}

function arm(side: 1 | -1): Part[] {
  const s = side > 0 ? 'left' : 'right';
  const x = side * 236;
  return [
    { name: `${s}Arm`, within: '', material: 'adipose', cx: x, cy: -8, a: 44, b: 50 },
    { name: `${s}ArmMuscle`, within: `${s}Arm`, material: 'muscle', cx: x, cy: -8, a: 37, b: 43 },
    { name: `${s}Humerus`, within: `${s}ArmMuscle`, material: 'corticalBone', cx: x + side * 3, cy: -4, a: 13, b: 13 },
    { name: `${s}Marrow`, within: `${s}Humerus`, material: 'softTissue', cx: x + side * 3, cy: -4, a: 7, b: 7 },
  ];
}

/** The chest cavity (mediastinal fat with lungs, heart and aorta inside). */
const CAVITY = { cy: 10, a: 140, b: 92 };

const PARTS: Part[] = [
  { name: 'body', within: '', material: 'adipose', cx: 0, cy: 0, a: 170, b: 120 },
  { name: 'wall', within: 'body', material: 'muscle', cx: 0, cy: 0, a: 160, b: 110 },
  { name: 'mediastinum', within: 'wall', material: 'adipose', cx: 0, cy: CAVITY.cy, a: CAVITY.a, b: CAVITY.b },
  { name: 'rightLung', within: 'mediastinum', material: 'lungTissue', cx: -72, cy: 10, a: 44, b: 68, phiDeg: 6 },
  { name: 'leftLung', within: 'mediastinum', material: 'lungTissue', cx: 76, cy: 10, a: 40, b: 66, phiDeg: -6 },
  { name: 'heart', within: 'mediastinum', material: 'muscle', cx: 4, cy: 30, a: 30, b: 26, phiDeg: -30 },
  { name: 'aorta', within: 'mediastinum', material: 'muscle', cx: 16, cy: -40, a: 11, b: 11 },
  { name: 'vertebra', within: 'wall', material: 'corticalBone', cx: 0, cy: -96, a: 18, b: 11 },
  { name: 'vertebraMarrow', within: 'vertebra', material: 'softTissue', cx: 0, cy: -96, a: 12, b: 6.5 },
  { name: 'sternum', within: 'wall', material: 'corticalBone', cx: 0, cy: 106.5, a: 10, b: 3 },
  { name: 'rightScapula', within: 'wall', material: 'corticalBone', cx: -92, cy: -78, a: 18, b: 4, phiDeg: -15 },
  { name: 'leftScapula', within: 'wall', material: 'corticalBone', cx: 92, cy: -78, a: 18, b: 4, phiDeg: 15 },
  ...ribs(),
  ...arm(-1),
  ...arm(1),
];

/** The thorax demo phantom (mu in 1/mm at 60 keV). */
export function thorax(): EllipsePhantom {
  const byName = new Map(PARTS.map((p) => [p.name, p]));
  const ellipses: Ellipse[] = PARTS.map((p) => {
    const parentMu = p.within ? mu60(byName.get(p.within)!.material) : 0;
    return { cx: p.cx, cy: p.cy, a: p.a, b: p.b, phiDeg: p.phiDeg ?? 0, value: mu60(p.material) - parentMu };
  });
  return { name: 'thorax', ellipses, muWater: MU_WATER_60KEV, radius: boundingRadius(ellipses) };
}

/** A uniform water cylinder of the given radius (mm), for cupping tests and calibration. */
export function waterCylinder(radiusMm = 150): EllipsePhantom {
  return {
    name: 'water',
    ellipses: [{ cx: 0, cy: 0, a: radiusMm, b: radiusMm, phiDeg: 0, value: MU_WATER_60KEV }],
    muWater: MU_WATER_60KEV,
    radius: radiusMm,
  };
}

/** The named parts of the demo thorax, for its 3D extension (thorax-3d.ts). */
export type ThoraxPart = Readonly<Part>;
export const THORAX_PARTS: readonly ThoraxPart[] = PARTS;
