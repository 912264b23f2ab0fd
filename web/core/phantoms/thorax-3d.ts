// The demo thorax in 3D: the same parts as the 2D demo (thorax.ts), each given an extent along
// z. Trunk, arms, aorta and spine are elliptic cylinders 300 mm long (longer than a C-arm's
// axial coverage, as a real trunk is); lungs, heart and scapulae are ellipsoids; ribs and the
// spinous process repeat every 30 mm as short cylinders. Every part has one copy centred on
// z = 0 whose section there is the 2D ellipse, so the central slice is the 2D demo exactly.
// Invented anatomy for demonstrations, with NIST attenuation values (materials.ts).
import { mu60, MU_WATER_60KEV } from './materials';
import type { Solid, SolidPhantom } from './solid';
import { THORAX_PARTS } from './thorax';

/** Half length of the trunk segment, mm. */
export const THORAX_HALF_LENGTH = 150;

interface Extent {
  shape: Solid['shape'];
  /** Semi-axis (ellipsoid) or half length (cylinder) along z, mm. */
  c: number;
  /** Centres along z, mm (one copy per centre). */
  z: number[];
}

/** Rib levels: one at z = 0 and every 30 mm up to +-120 mm. */
const RIB_LEVELS = [-120, -90, -60, -30, 0, 30, 60, 90, 120];

function extent(name: string): Extent {
  if (name.startsWith('rib') || name === 'spinousProcess') return { shape: 'cylinder', c: 6, z: RIB_LEVELS };
  switch (name) {
    case 'rightLung':
    case 'leftLung':
      return { shape: 'ellipsoid', c: 115, z: [0] };
    case 'heart':
      return { shape: 'ellipsoid', c: 60, z: [0] };
    case 'rightScapula':
    case 'leftScapula':
      return { shape: 'ellipsoid', c: 75, z: [0] };
    case 'sternum':
      return { shape: 'cylinder', c: 90, z: [0] };
    default:
      return { shape: 'cylinder', c: THORAX_HALF_LENGTH, z: [0] };
  }
}

/** The 3D demo thorax (mu in 1/mm at 60 keV). */
export function thorax3d(): SolidPhantom {
  const byName = new Map(THORAX_PARTS.map((p) => [p.name, p]));
  const solids: Solid[] = [];
  for (const p of THORAX_PARTS) {
    const parentMu = p.within ? mu60(byName.get(p.within)!.material) : 0;
    const e = extent(p.name);
    for (const cz of e.z) {
      solids.push({ shape: e.shape, cx: p.cx, cy: p.cy, cz, a: p.a, b: p.b, c: e.c, phiDeg: p.phiDeg ?? 0, value: mu60(p.material) - parentMu });
    }
  }
  return { name: 'thorax', solids, muWater: MU_WATER_60KEV, radius: 282, halfHeight: THORAX_HALF_LENGTH };
}

/** A uniform water cylinder (radius and half length in mm), for cupping tests and calibration. */
export function waterCylinder3d(radiusMm = 150, halfLengthMm = THORAX_HALF_LENGTH): SolidPhantom {
  return {
    name: 'water',
    solids: [{ shape: 'cylinder', cx: 0, cy: 0, cz: 0, a: radiusMm, b: radiusMm, c: halfLengthMm, phiDeg: 0, value: MU_WATER_60KEV }],
    muWater: MU_WATER_60KEV,
    radius: radiusMm,
    halfHeight: halfLengthMm,
  };
}
