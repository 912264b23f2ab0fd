// A scan: projections plus the geometry that produced them.
import type { Geometry } from './geometry/types';

/** Projections stored as [view][row][channel], channel fastest (DEVELOPERS.md, "Geometry"). */
export interface Scan {
  geometry: Geometry;
  /** Line integrals (dimensionless) after preprocessing. */
  data: Float32Array;
  /** Attenuation of water at the scan's effective energy, 1/mm, when known. */
  muWater?: number;
  /** Free-form provenance (phantom name, simulation settings). */
  notes?: Record<string, string>;
}
