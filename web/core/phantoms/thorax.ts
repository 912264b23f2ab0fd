// Rimfill's demo object: an invented adult thorax slice with arms at the sides, built from
// ellipses with attenuation from NIST data (materials.ts). Wider than a small detector's field
// of view, so a scan of it is truncated: the body is 340 mm wide, 560 mm with the arms.
// Anterior is +y; the patient's right is -x (radiological view).
import type { Ellipse, EllipsePhantom } from './ellipse';
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

function ribs(): Part[] {
  const out: Part[] = [];
  // Ten ribs on an ellipse just inside the chest wall, avoiding the sternum and the spine.
  for (const deg of [28, 52, 76, 104, 128, 152, 208, 232, 308, 332]) {
    const t = (deg * Math.PI) / 180;
    out.push({ name: `rib${deg}`, within: 'wall', material: 'corticalBone', cx: 148 * Math.cos(t), cy: 98 * Math.sin(t), a: 7, b: 4.5, phiDeg: deg + 90 });
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

const PARTS: Part[] = [
  { name: 'body', within: '', material: 'adipose', cx: 0, cy: 0, a: 170, b: 120 },
  { name: 'wall', within: 'body', material: 'muscle', cx: 0, cy: 0, a: 160, b: 110 },
  { name: 'mediastinum', within: 'wall', material: 'adipose', cx: 0, cy: 0, a: 138, b: 90 },
  { name: 'rightLung', within: 'mediastinum', material: 'lungTissue', cx: -72, cy: 6, a: 54, b: 78, phiDeg: 8 },
  { name: 'leftLung', within: 'mediastinum', material: 'lungTissue', cx: 74, cy: 6, a: 50, b: 76, phiDeg: -8 },
  { name: 'heart', within: 'mediastinum', material: 'muscle', cx: 18, cy: 22, a: 46, b: 38, phiDeg: -30 },
  { name: 'aorta', within: 'mediastinum', material: 'muscle', cx: 14, cy: -50, a: 12, b: 12 },
  { name: 'vertebra', within: 'wall', material: 'corticalBone', cx: 0, cy: -76, a: 21, b: 18 },
  { name: 'vertebraMarrow', within: 'vertebra', material: 'softTissue', cx: 0, cy: -76, a: 15, b: 12 },
  { name: 'spinousProcess', within: 'wall', material: 'corticalBone', cx: 0, cy: -101, a: 5, b: 8 },
  { name: 'sternum', within: 'wall', material: 'corticalBone', cx: 0, cy: 102, a: 13, b: 5 },
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
  return { name: 'thorax', ellipses, muWater: MU_WATER_60KEV, radius: 282 };
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
