// Known regions as a constraint of the iterative methods. After each data sweep and each TV
// phase: (1) the regions' offsets from their known values are fitted by a smooth field over the
// measured field of view (a constant; with three or more regions also a plane), which is added
// there and faded out beyond it, because what the truncated data leave open inside the field is
// smooth and a known subregion settles it (Kudo et al. 2008, REFERENCES.md [kudo2008]; a coarse
// smooth basis fitted to a known subregion: Paleo et al. 2017, [paleo2017]); the data sweeps
// that follow move the outside so the measured rays agree again; (2) each region is then shifted
// to its known value exactly (its coverage-weighted mean; texture and noise in the region are
// kept). Regions lie inside the measured field of view (knowledge/check.ts).
import type { Buf, Workspace } from '../engine/workspace';
import type { PlacedRegion } from '../knowledge';
import { gridOrigin } from '../image';
import { at, type BandOps } from './image-ops';
import { gridBands, gridSize, planeGrid, sliceCount, type ReconGrid } from './space';

interface RegionBuffers {
  region: PlacedRegion;
  /** Elements [from, to) of the image hold the region's pixels. */
  from: number;
  to: number;
  /** Coverage over [from, to). */
  coverage: Buf;
  /** sum c and sum c^2 over the region. */
  sum: number;
  sumSquares: number;
  /** Coverage-weighted mean of each smooth basis function over the region. */
  basisMeans: number[];
}

/** The smooth field's basis has a constant, and x, y with this many regions or more. */
const PLANE_REGIONS = 3;

/** The field is faded out between the field of view's radius and this multiple of it (cos^2). */
const FADE_TO = 1.5;

export class KnownRegions {
  private constructor(
    private readonly ws: Workspace,
    private readonly buffers: RegionBuffers[],
    private readonly basis: Buf[],
    private readonly rows: BandOps,
  ) {}

  /** Lays out the regions and the smooth basis in the workspace; undefined when there are no regions. */
  static async create(ws: Workspace, grid: ReconGrid, regions: PlacedRegion[], fovRadius: number, support: Uint8Array): Promise<KnownRegions | undefined> {
    if (regions.length === 0) return undefined;
    const basisImages = smoothBasis(grid, fovRadius, support, regions.length >= PLANE_REGIONS ? 3 : 1);
    const basis = basisImages.map((b, m) => ws.alloc(`regionBasis${m}`, b.length));
    for (const [m, b] of basisImages.entries()) await ws.write(basis[m], b);
    const buffers: RegionBuffers[] = [];
    for (const [i, region] of regions.entries()) {
      const c = region.coverage;
      let from = c.length, to = 0, sum = 0, sumSquares = 0;
      for (let q = 0; q < c.length; q++) {
        if (c[q] <= 0) continue;
        from = Math.min(from, q);
        to = q + 1;
        sum += c[q];
        sumSquares += c[q] * c[q];
      }
      const coverage = ws.alloc(`knownRegion${i}`, to - from);
      await ws.write(coverage, c.subarray(from, to));
      buffers.push({ region, from, to, coverage, sum, sumSquares, basisMeans: basisImages.map((b) => regionMean(b, c)) });
    }
    return new KnownRegions(ws, buffers, basis, gridBands(ws, grid));
  }

  /** Coverage-weighted mean of image `x` over each region, 1/mm (one part: the same on any number of workers). */
  private async means(x: Buf): Promise<number[]> {
    const out: number[] = [];
    for (const b of this.buffers) {
      const [weighted] = await this.ws.run([{ kernel: 'dotArrays', args: [at(x, b.from), b.coverage, b.to - b.from] }]);
      out.push(weighted / b.sum);
    }
    return out;
  }

  /** Adds the smooth field that best meets the regions' values, then sets each region to its value. */
  async apply(x: Buf): Promise<void> {
    const offsets = (await this.means(x)).map((m, k) => this.buffers[k].region.mu - m);
    const coefficients = fitField(this.buffers.map((b) => b.basisMeans), offsets);
    for (const [m, a] of coefficients.entries()) if (a !== 0) await this.rows.addScaled(x, this.basis[m], a);
    const means = await this.means(x);
    for (const [k, b] of this.buffers.entries()) {
      // x_j += c_j delta with delta sum c^2 = (mu - mean) sum c: the weighted mean becomes mu.
      const delta = ((b.region.mu - means[k]) * b.sum) / b.sumSquares;
      const n = b.to - b.from;
      await this.ws.run([{ kernel: 'addScaled', args: [at(x, b.from), b.coverage, n, delta], writes: [{ buf: x, start: b.from, length: n }] }]);
    }
  }
}

/**
 * The smooth basis on the grid: 1 (and x / r, y / r) inside the field of view of radius r, faded
 * out with cos^2 up to FADE_TO r, 0 outside the support; every slice of a volume alike.
 */
function smoothBasis(grid: ReconGrid, r: number, support: Uint8Array, count: number): Float32Array[] {
  const plane = planeGrid(grid);
  const { x0, y0 } = gridOrigin(plane);
  const n = plane.nx * plane.ny;
  const out = Array.from({ length: count }, () => new Float32Array(gridSize(grid)));
  for (let j = 0; j < plane.ny; j++) {
    for (let i = 0; i < plane.nx; i++) {
      const x = x0 + i * plane.dx, y = y0 + j * plane.dy;
      const t = (Math.hypot(x, y) - r) / ((FADE_TO - 1) * r);
      const fade = t <= 0 ? 1 : t < 1 ? Math.cos((t * Math.PI) / 2) ** 2 : 0;
      const values = [fade, (fade * x) / r, (fade * y) / r];
      for (let k = 0; k < sliceCount(grid); k++) {
        const q = k * n + j * plane.nx + i;
        if (!support[q]) continue;
        for (let m = 0; m < count; m++) out[m][q] = values[m];
      }
    }
  }
  return out;
}

/**
 * Least-squares coefficients a of sum_m a_m B[k][m] = offsets[k] over the regions k (normal
 * equations; the basis has at most three functions). Coefficients the regions cannot determine
 * (fewer regions than functions, or regions on a line) are 0.
 */
export function fitField(B: number[][], offsets: number[]): number[] {
  const size = B[0].length;
  for (let m = Math.min(size, B.length); m >= 1; m--) {
    const a = solveNormal(B, offsets, m);
    if (a) return [...a, ...new Array<number>(size - m).fill(0)];
  }
  return new Array<number>(size).fill(0);
}

/** The first m coefficients by least squares, or undefined when the regions do not determine them (e.g. three regions on a line). */
function solveNormal(B: number[][], offsets: number[], m: number): number[] | undefined {
  const A = Array.from({ length: m }, () => new Array<number>(m + 1).fill(0));
  for (const [k, row] of B.entries()) {
    for (let p = 0; p < m; p++) {
      for (let q = 0; q < m; q++) A[p][q] += row[p] * row[q];
      A[p][m] += row[p] * offsets[k];
    }
  }
  for (let c = 0; c < m; c++) {
    let p = c;
    for (let r = c + 1; r < m; r++) if (Math.abs(A[r][c]) > Math.abs(A[p][c])) p = r;
    [A[c], A[p]] = [A[p], A[c]];
    if (Math.abs(A[c][c]) < 1e-9 * (1 + Math.abs(A[0][0]))) return undefined;
    for (let r = 0; r < m; r++) {
      if (r === c) continue;
      const f = A[r][c] / A[c][c];
      for (let q = c; q <= m; q++) A[r][q] -= f * A[c][q];
    }
  }
  return A.map((row, c) => row[m] / row[c]);
}

/** Coverage-weighted mean of `image` over a region, 1/mm. */
export function regionMean(image: Float32Array, coverage: Float32Array): number {
  let s = 0, w = 0;
  for (let q = 0; q < coverage.length; q++) {
    if (coverage[q] > 0) {
      s += coverage[q] * image[q];
      w += coverage[q];
    }
  }
  return w > 0 ? s / w : NaN;
}
