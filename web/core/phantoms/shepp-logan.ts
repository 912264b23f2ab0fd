// The Shepp-Logan head phantom (L. A. Shepp & B. F. Logan, "The Fourier reconstruction of a
// head section", IEEE Trans. Nucl. Sci. NS-21(3):21-43, 1974, Table 1) and its higher-contrast
// variant (P. A. Toft, The Radon Transform, PhD thesis, DTU 1996, Table B.3).
// Table units: the phantom spans [-1, 1]^2; here one unit is `scaleMm` mm and table values are
// multiples of mu_water, so the original phantom's brain (1.02) reads about 20 HU.
import { MU_WATER_60KEV } from './materials';
import { boundingRadius, type EllipsePhantom } from './ellipse';

/** [x0, y0, A, B, phi(deg), rho original, rho modified] (REFERENCES.md [shepp-logan-1974]). */
export const SHEPP_LOGAN_TABLE: ReadonlyArray<readonly [number, number, number, number, number, number, number]> = [
  [0, 0, 0.69, 0.92, 0, 2.0, 1.0],
  [0, -0.0184, 0.6624, 0.874, 0, -0.98, -0.8],
  [0.22, 0, 0.11, 0.31, -18, -0.02, -0.2],
  [-0.22, 0, 0.16, 0.41, 18, -0.02, -0.2],
  [0, 0.35, 0.21, 0.25, 0, 0.01, 0.1],
  [0, 0.1, 0.046, 0.046, 0, 0.01, 0.1],
  [0, -0.1, 0.046, 0.046, 0, 0.01, 0.1],
  [-0.08, -0.605, 0.046, 0.023, 0, 0.01, 0.1],
  [0, -0.605, 0.023, 0.023, 0, 0.01, 0.1],
  [0.06, -0.605, 0.023, 0.046, 0, 0.01, 0.1],
];

/**
 * Shepp-Logan phantom in mm and 1/mm. `variant` picks the original (Shepp & Logan) or the
 * higher-contrast (Toft) intensities; `unit` is the table value that maps to 1/mm.
 */
export function sheppLogan(variant: 'original' | 'modified' = 'original', scaleMm = 100, unit = MU_WATER_60KEV): EllipsePhantom {
  const ellipses = SHEPP_LOGAN_TABLE.map(([x, y, a, b, phi, r0, r1]) => ({
      cx: x * scaleMm,
      cy: y * scaleMm,
      a: a * scaleMm,
      b: b * scaleMm,
      phiDeg: phi,
      value: (variant === 'original' ? r0 : r1) * unit,
  }));
  return { name: variant === 'original' ? 'shepp-logan' : 'shepp-logan-modified', muWater: MU_WATER_60KEV, radius: boundingRadius(ellipses), ellipses };
}
