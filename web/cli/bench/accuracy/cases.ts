// Severe-truncation accuracy cases built from images we did not design: real CT slices
// (test/fixtures/ct, REFERENCES.md [nema-ct1], [pydicom-head]) and the thorax phantom, scanned in
// a C-arm-like fan geometry (source-isocentre 750 mm, source-detector 1200 mm, flat panel) whose
// measured field of view has a radius of a set fraction (default 0.42) of the body's half-width.
// Each case also carries the knowledge a user would have: an outline ellipse fitted to the body
// (its second moments, not its exact contour) and the most uniform 20 mm soft-tissue disk inside
// the field of view with its value rounded to 10 HU. Tests and `rimfill bench` share these cases.
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { Workspace } from '../../../core/engine/workspace';
import { readImage2D } from '../../../core/formats/read-image';
import type { Geometry } from '../../../core/geometry/types';
import { validateGeometry } from '../../../core/geometry/validate';
import { fovRadius } from '../../../core/geometry/view-vectors';
import { gridOrigin, type Image2D } from '../../../core/image';
import type { KnownCircle, Outline } from '../../../core/knowledge';
import { rasterize } from '../../../core/phantoms/ellipse';
import { thorax } from '../../../core/phantoms/thorax';
import { Projector2d } from '../../../core/recon/projector';
import type { Scan } from '../../../core/scan';
import { analyticSinogram } from '../../../core/simulate/analytic';

export interface SevereCase {
  name: string;
  /** One line for reports. */
  about: string;
  /** The object, mu in 1/mm. */
  truth: Image2D;
  /** The truncated scan (exact line integrals unless noise was asked for). */
  scan: Scan;
  fovRadius: number;
  /** Half of the body's width along x, mm (HU > -500, the part connected to the centre). */
  bodyHalfWidth: number;
  /** What a user would draw: the ellipse with the body's area and second moments. */
  outline: Outline;
  /** What a user would know: a uniform 20 mm soft-tissue disk in the field of view, its HU rounded to 10. */
  known: KnownCircle;
}

export interface CaseOptions {
  /** Views over a full turn. */
  views?: number;
  /** FOV radius / body half-width. */
  fovFraction?: number;
  /** Detector pitch, mm. */
  pitch?: number;
}

const R = 750, D = 1200;
/** mu of water for the real slices, 1/mm (about 70 keV; a typical effective CT energy, from memory). */
export const MU_WATER_SLICES = 0.0193;

/** A fan geometry with a centred flat panel just wide enough for a FOV of radius `fov` mm. */
export function cArmFan(fov: number, views: number, pitch: number): Geometry {
  const uMax = D * Math.tan(Math.asin(fov / R));
  const channels = 2 * Math.ceil(uMax / pitch);
  return validateGeometry({
    kind: 'fan', detector: { shape: 'flat', channels, rows: 1, pitch: [pitch, pitch], offset: [0, 0] },
    sourceIsocenter: R, sourceDetector: D, anglesDeg: { start: 0, step: 360 / views, count: views },
  });
}

/** The body: pixels above -500 HU connected to the pixel nearest the isocentre (4-neighbour fill). */
function bodyMask(img: Image2D, muWater: number): Uint8Array {
  const g = img.grid;
  const { x0, y0 } = gridOrigin(g);
  const above = (q: number) => img.data[q] > 0.5 * muWater;
  const mask = new Uint8Array(g.nx * g.ny);
  const start = Math.round(-y0 / g.dy) * g.nx + Math.round(-x0 / g.dx);
  const stack = [start];
  while (stack.length) {
    const q = stack.pop()!;
    if (mask[q] || !above(q)) continue;
    mask[q] = 1;
    const i = q % g.nx, j = (q - i) / g.nx;
    if (i > 0) stack.push(q - 1);
    if (i < g.nx - 1) stack.push(q + 1);
    if (j > 0) stack.push(q - g.nx);
    if (j < g.ny - 1) stack.push(q + g.nx);
  }
  return mask;
}

/** The ellipse with the mask's centroid and second moments (a uniform ellipse has variance a^2 / 4 along its axis). */
function momentEllipse(mask: Uint8Array, img: Image2D): { outline: Outline; halfWidth: number } {
  const g = img.grid;
  const { x0, y0 } = gridOrigin(g);
  let n = 0, sx = 0, sy = 0, sxx = 0, syy = 0, sxy = 0, xmin = Infinity, xmax = -Infinity;
  for (let q = 0; q < mask.length; q++) {
    if (!mask[q]) continue;
    const x = x0 + (q % g.nx) * g.dx, y = y0 + Math.floor(q / g.nx) * g.dy;
    n++; sx += x; sy += y; sxx += x * x; syy += y * y; sxy += x * y;
    xmin = Math.min(xmin, x); xmax = Math.max(xmax, x);
  }
  const cx = sx / n, cy = sy / n;
  const vxx = sxx / n - cx * cx, vyy = syy / n - cy * cy, vxy = sxy / n - cx * cy;
  const mean = (vxx + vyy) / 2, dev = Math.hypot((vxx - vyy) / 2, vxy);
  const angle = 0.5 * Math.atan2(2 * vxy, vxx - vyy);
  const outline: Outline = { shape: 'ellipse', cx, cy, a: 2 * Math.sqrt(mean + dev), b: 2 * Math.sqrt(mean - dev), angleDeg: (angle * 180) / Math.PI };
  return { outline, halfWidth: (xmax - xmin + g.dx) / 2 };
}

/** The 20 mm disk inside the FOV (5 mm clear of its edge) with the lowest SD among water-like soft-tissue disks (mean -120..120 HU: fat, blood without contrast, muscle). */
function uniformDisk(img: Image2D, fov: number, muWater: number): KnownCircle {
  const g = img.grid;
  const { x0, y0 } = gridOrigin(g);
  const r = 10;
  let best: { sd: number; x: number; y: number; mean: number } | undefined;
  for (let y = -fov; y <= fov; y += 4) {
    for (let x = -fov; x <= fov; x += 4) {
      if (Math.hypot(x, y) + r > fov - 5) continue;
      let n = 0, s = 0, ss = 0;
      for (let j = Math.floor((y - r - y0) / g.dy); j <= Math.ceil((y + r - y0) / g.dy); j++) {
        for (let i = Math.floor((x - r - x0) / g.dx); i <= Math.ceil((x + r - x0) / g.dx); i++) {
          if (Math.hypot(x0 + i * g.dx - x, y0 + j * g.dy - y) > r) continue;
          const hu = (1000 * (img.data[j * g.nx + i] - muWater)) / muWater;
          n++; s += hu; ss += hu * hu;
        }
      }
      const mean = s / n, sd = Math.sqrt(Math.max(0, ss / n - mean * mean));
      if (Math.abs(mean) <= 120 && (!best || sd < best.sd)) best = { sd, x, y, mean };
    }
  }
  if (!best) throw new Error('no soft-tissue disk of 20 mm fits inside the field of view');
  return { shape: 'circle', x: best.x, y: best.y, r, hu: Math.round(best.mean / 10) * 10, label: 'soft tissue' };
}

/** Knowledge and geometry for an object image; `project` gives the scan's line integrals. */
function buildCase(name: string, about: string, truth: Image2D, o: CaseOptions, project: (g: Geometry) => Promise<Float32Array>): Promise<SevereCase> {
  const muWater = truth.muWater!;
  const body = bodyMask(truth, muWater);
  const { outline, halfWidth } = momentEllipse(body, truth);
  const fov0 = (o.fovFraction ?? 0.42) * halfWidth;
  const geometry = cArmFan(fov0, o.views ?? 360, o.pitch ?? 0.8);
  const fov = fovRadius(geometry);
  return project(geometry).then((data) => ({
    name, about, truth, fovRadius: fov, bodyHalfWidth: halfWidth, outline, known: uniformDisk(truth, fov, muWater),
    scan: { geometry, data, muWater, notes: { phantom: name } },
  }));
}

const FIXTURES = new URL('../../../../test/fixtures/ct/', import.meta.url);

/** A real CT slice from test/fixtures/ct as mu (HU below -1000, the scanner's padding included, become air). */
export async function realSlice(file: string, muWater = MU_WATER_SLICES): Promise<Image2D> {
  const bytes = new Uint8Array(readFileSync(fileURLToPath(new URL(file, FIXTURES))));
  const { image } = await readImage2D([{ name: file, bytes }], { muWater });
  const data = image.data.map((v) => Math.max(0, v));
  return { ...image, data, muWater, quantity: 'mu' };
}

/** A case from a real CT slice, projected by Joseph's method on the slice's own grid. */
export async function realSliceCase(ws: Workspace, file: 'nema-ct1-thorax.nrrd' | 'pydicom-head.nrrd', o: CaseOptions = {}): Promise<SevereCase> {
  const truth = await realSlice(file);
  const about = file.startsWith('nema') ? 'real CT thorax slice (NEMA WG-04 CT1)' : 'real CT head slice (pydicom 693_J2KI)';
  return buildCase(file.replace('.nrrd', ''), about, truth, o, async (geometry) => {
    const proj = await Projector2d.create(ws, truth.grid, geometry);
    const img = ws.alloc('case-truth', truth.data.length);
    const sino = ws.alloc('case-sino', proj.nViews * proj.nCh);
    await ws.write(img, truth.data);
    await proj.forward(img, sino);
    const data = await ws.read(sino);
    ws.reset();
    return data;
  });
}

/** The thorax phantom with arms (analytic projections, 4 rays per channel). */
export function thoraxCase(o: CaseOptions = {}): Promise<SevereCase> {
  const p = thorax();
  const truth: Image2D = { grid: { nx: 512, ny: 512, dx: 0.8, dy: 0.8, cx: 0, cy: 0 }, data: new Float32Array(0), quantity: 'mu', muWater: p.muWater };
  truth.data = rasterize(p, truth.grid, 4);
  return buildCase('thorax-phantom', 'thorax phantom with arms (analytic projections)', truth, o, async (g) => analyticSinogram(p, g, 4));
}
