// Chord profiles onto the image grid: a pixel in the field of view lies between two neighbouring
// chords of the family; its value is interpolated linearly along each and between the two
// (bilinear in polar coordinates about the family's centre). Pixels outside the field of view,
// or next to a chord that could not be inverted, are not determined: they get the fill value and
// are marked in the mask.
import { gridOrigin, type ImageGrid } from '../image';
import type { ChordFamily } from './chords';

export interface ChordImage {
  data: Float32Array;
  /** 1 where the pixel is not determined by the data and knowledge. */
  undetermined: Uint8Array;
}

/** Value of chord m's profile at distance t from the centre (inside nodes, clamped at the ends). */
function profileAt(f: ChordFamily, profiles: Float64Array[], m: number, t: number): number {
  const c = f.chords[m], p = profiles[m];
  const n = c.inside1 - c.inside0;
  const s = t / f.step - c.k0;
  const i = Math.floor(s), w = s - i;
  const a = c.inside0 + Math.max(0, Math.min(i, n - 1)), b = c.inside0 + Math.max(0, Math.min(i + 1, n - 1));
  return p[a] * (1 - w) + p[b] * w;
}

/** The image of the profiles on `grid` inside the disk of radius `fovRadius`; `fill` elsewhere. */
export function chordImage(f: ChordFamily, profiles: Float64Array[], determined: Uint8Array, grid: ImageGrid, fovRadius: number, fill: number): ChordImage {
  const data = new Float32Array(grid.nx * grid.ny).fill(fill);
  const undetermined = new Uint8Array(grid.nx * grid.ny).fill(1);
  const { x0, y0 } = gridOrigin(grid);
  const M = f.count, dPsi = Math.PI / M;
  // Chord index in [0, 2M): indices M.. are chords 0.. walked the other way.
  const value = (m: number, r: number) => (m < M ? profileAt(f, profiles, m, r) : profileAt(f, profiles, m - M, -r));
  const known = (m: number) => determined[m % M] === 1;
  for (let j = 0; j < grid.ny; j++) {
    const y = y0 + j * grid.dy;
    for (let i = 0; i < grid.nx; i++) {
      const x = x0 + i * grid.dx;
      if (x * x + y * y > fovRadius * fovRadius) continue;
      const rx = x - f.cx, ry = y - f.cy;
      let psi = Math.atan2(ry, rx);
      if (psi < 0) psi += 2 * Math.PI;
      const q = psi / dPsi;
      const m0 = Math.floor(q) % (2 * M), m1 = (m0 + 1) % (2 * M), w = q - Math.floor(q);
      if (!known(m0) || !known(m1)) continue;
      const r = Math.hypot(rx, ry);
      data[j * grid.nx + i] = value(m0, r) * (1 - w) + value(m1, r) * w;
      undetermined[j * grid.nx + i] = 0;
    }
  }
  return { data, undetermined };
}
