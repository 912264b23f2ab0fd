// The three-dimensional Shepp-Logan head of Kak & Slaney (Principles of Computerized
// Tomographic Imaging, IEEE Press 1988, section 3.6, ellipsoid table).
//
// FROM MEMORY, NOT VERIFIED against the book (REFERENCES.md [ellipsoid-chord]): the values below are as
// remembered and as transcribed in a secondary copy of the table; where the two disagreed the
// secondary copy was taken. What can be checked is checked in test/core/phantoms-3d.test.ts:
// at z = -0.25 the ventricles (c, d), ellipse e and tumour f have exactly the centres, semi-axes
// and orientations of Shepp & Logan's verified 2D ellipses d, c, e, f (REFERENCES.md [shepp-logan-1974], written
// in Kak & Slaney's (A, B, angle) form); the skull ellipsoids a, b have the 2D semi-axes in x
// and y. Known differences from the 2D table: b is centred at y = 0 (2D: -0.0184), the small
// tumours g, h sit at y = -0.65 (2D: -0.605) and e, f have twice the 2D contrast (0.02).
// The central slice z = 0 is therefore NOT the 2D phantom: it cuts only a, b and e.
// Units as in shepp-logan.ts: one table unit is `scaleMm` mm, densities are multiples of `unit`.
import { MU_WATER_60KEV } from './materials';
import type { SolidPhantom } from './solid';

/**
 * [x0, y0, z0, A, B, C, rotation about z (deg, A's axis from +x), density as tabulated,
 *  density of Rimfill's higher-contrast variant].
 * The variant scales the small contrasts by ten and sets the skull and brain to 1 and 0.2, as
 * Toft's 2D variant does (P. A. Toft, The Radon Transform, DTU 1996, Table B.3); that mapping
 * onto the 3D table is Rimfill's own choice.
 */
export const SHEPP_LOGAN_3D_TABLE: ReadonlyArray<readonly [number, number, number, number, number, number, number, number, number]> = [
  [0, 0, 0, 0.69, 0.92, 0.9, 0, 2.0, 1.0],
  [0, 0, 0, 0.6624, 0.874, 0.88, 0, -0.98, -0.8],
  [-0.22, 0, -0.25, 0.41, 0.16, 0.21, 108, -0.02, -0.2],
  [0.22, 0, -0.25, 0.31, 0.11, 0.22, 72, -0.02, -0.2],
  [0, 0.35, -0.25, 0.21, 0.25, 0.5, 0, 0.02, 0.2],
  [0, 0.1, -0.25, 0.046, 0.046, 0.046, 0, 0.02, 0.2],
  [-0.08, -0.65, -0.25, 0.046, 0.023, 0.02, 0, 0.01, 0.1],
  [0.06, -0.65, -0.25, 0.023, 0.046, 0.02, 90, 0.01, 0.1],
  [0.06, -0.105, 0.625, 0.04, 0.056, 0.1, 90, 0.02, 0.2],
  [0, 0.1, 0.625, 0.056, 0.04, 0.1, 0, -0.02, -0.2],
];

/** The 3D Shepp-Logan head in mm and 1/mm (see the file comment for what is verified). */
export function sheppLogan3d(variant: 'original' | 'modified' = 'original', scaleMm = 100, unit = MU_WATER_60KEV): SolidPhantom {
  return {
    name: variant === 'original' ? 'shepp-logan' : 'shepp-logan-modified',
    muWater: MU_WATER_60KEV,
    radius: 0.92 * scaleMm,
    halfHeight: 0.9 * scaleMm,
    solids: SHEPP_LOGAN_3D_TABLE.map(([x, y, z, a, b, c, phi, r0, r1]) => ({
      shape: 'ellipsoid' as const,
      cx: x * scaleMm,
      cy: y * scaleMm,
      cz: z * scaleMm,
      a: a * scaleMm,
      b: b * scaleMm,
      c: c * scaleMm,
      phiDeg: phi,
      value: (variant === 'original' ? r0 : r1) * unit,
    })),
  };
}
