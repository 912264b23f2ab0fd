// Linear attenuation coefficients of tissues at 60 keV, 1/mm, from NIST mass attenuation
// coefficients (J. H. Hubbell & S. M. Seltzer, NIST SRD 126 / NISTIR 5632, Table 4; densities
// from Table 2). mu = (mu/rho) * rho * 0.1 (cm^-1 -> mm^-1). 60 keV is a grid point of the NIST
// tables, close to the effective energy of a 120 kVp CT beam (common practice).

/** Mass attenuation coefficient at 60 keV, cm^2/g (NIST SRD 126, Table 4). */
const MASS_ATTENUATION_60KEV = {
  water: 0.2059,
  softTissue: 0.2048,
  muscle: 0.2048,
  adipose: 0.1974,
  corticalBone: 0.3148,
  lungTissue: 0.2053,
  air: 0.1875,
} as const;

/** Density, g/cm^3 (NIST SRD 126, Table 2), except inflated lung (ICRU 46, from memory). */
const DENSITY = {
  water: 1.0,
  softTissue: 1.06,
  muscle: 1.05,
  adipose: 0.95,
  corticalBone: 1.92,
  lungTissue: 0.26,
  air: 0.001205,
} as const;

export type Material = keyof typeof DENSITY;

/** Linear attenuation coefficient at 60 keV, 1/mm. */
export function mu60(m: Material): number {
  return MASS_ATTENUATION_60KEV[m] * DENSITY[m] * 0.1;
}

/** mu of water at 60 keV, 1/mm (0.02059). */
export const MU_WATER_60KEV = mu60('water');
