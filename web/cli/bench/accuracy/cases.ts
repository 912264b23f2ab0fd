// Severe-truncation accuracy cases built from images we did not design: real CT slices
// (test/fixtures/ct, REFERENCES.md [nema-ct1], [pydicom-head]) and the thorax phantom, scanned in
// a C-arm-like fan geometry (source-isocentre 750 mm, source-detector 1200 mm, flat panel) whose
// measured field of view has a radius of a set fraction (default 0.42) of the body's half-width.
// Each case also carries the knowledge a user would have: an outline ellipse fitted to the body
// (its second moments, not its exact contour) and the most uniform 20 mm soft-tissue disk inside
// the field of view with its value rounded to 10 HU. Tests and `rimfill bench` share these cases.
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { Workspace } from '../../../core/engine/workspace';
import { readImage2D } from '../../../core/formats/read-image';
import type { Geometry } from '../../../core/geometry/types';
import { cropDetector, presetGeometry } from '../../../core/geometry/presets';
import { validateGeometry } from '../../../core/geometry/validate';
import { fovRadius } from '../../../core/geometry/view-vectors';
import { gridOrigin, type Image2D } from '../../../core/image';
import type { KnownCircle, Outline } from '../../../core/knowledge';
import { bodyMask } from '../../../core/knowledge/threshold-mask';
import { rasterize, type EllipsePhantom } from '../../../core/phantoms/ellipse';
import { addPhotonNoise } from '../../../core/simulate/noise';
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
  /** An outline that holds everything in the slice (arms, a head holder, the table): the convex hull of the object, a polygon. */
  hull: Outline;
  /** What a user would know: a uniform 20 mm soft-tissue disk in the field of view, its HU rounded to 10. */
  known: KnownCircle;
  /** Exact line integrals of the object for any 2D geometry (the complete data a wider detector would measure). */
  project(g: Geometry): Promise<Float32Array>;
}

export interface CaseOptions {
  /** Views over a full turn. */
  views?: number;
  /** FOV radius / body half-width. */
  fovFraction?: number;
  /** Detector pitch, mm. */
  pitch?: number;
  /** Pixel size of the thorax phantom's truth image, mm (default 0.8; the image covers the arms). */
  truthPixel?: number;
  /** Arc of the scan, degrees (default 360; a C-arm short scan is about 200). */
  arcDeg?: number;
  /** A geometry of its own instead of the C-arm-like fan (views, arc and FOV fraction are then its own). */
  geometry?: Geometry;
  /** Incident photons per detector element (Poisson noise, seeded); absent: exact line integrals. */
  photons?: number;
  seed?: number;
  /** Moves the object by these fractions of the body's half-width (x, y), so that the field of view lies off the body's centre. */
  shift?: [number, number];
}

const R = 750, D = 1200;
/** mu of water for the real slices, 1/mm (about 70 keV; a typical effective CT energy, from memory). */
export const MU_WATER_SLICES = 0.0193;

/**
 * A fan geometry with a centred flat panel just wide enough for a FOV of radius `fov` mm;
 * `views` per full turn over `arcDeg` degrees.
 */
export function cArmFan(fov: number, views: number, pitch: number, arcDeg = 360): Geometry {
  const uMax = D * Math.tan(Math.asin(fov / R));
  const channels = 2 * Math.ceil(uMax / pitch);
  return validateGeometry({
    kind: 'fan', detector: { shape: 'flat', channels, rows: 1, pitch: [pitch, pitch], offset: [0, 0] },
    sourceIsocenter: R, sourceDetector: D, anglesDeg: { start: 0, step: 360 / views, count: Math.round((views * arcDeg) / 360) },
  });
}

/** The case's geometry with the detector widened to cover the whole object (reach mm from the isocentre). */
export function completeGeometry(c: SevereCase, reach: number): Geometry {
  const g = c.scan.geometry;
  const r = g.sourceIsocenter ?? R, d = g.sourceDetector ?? D;
  const uMax = d * Math.tan(Math.asin(Math.min(0.95, reach / r)));
  const pitch = g.detector.pitch[0];
  return validateGeometry({ ...g, detector: { ...g.detector, channels: 2 * Math.ceil(uMax / pitch), offset: [0, g.detector.offset[1]] } });
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

/** Knowledge and geometry for an object image; `project` gives the object's line integrals for a geometry. */
async function buildCase(name: string, about: string, truth: Image2D, o: CaseOptions, project: (g: Geometry) => Promise<Float32Array>): Promise<SevereCase> {
  const muWater = truth.muWater!;
  const body = bodyMask(truth, 0.5 * muWater); // above -500 HU
  const { outline, halfWidth } = momentEllipse(body, truth);
  const fov0 = (o.fovFraction ?? 0.42) * halfWidth;
  const geometry = o.geometry ?? cArmFan(fov0, o.views ?? 360, o.pitch ?? 0.8, o.arcDeg);
  const fov = fovRadius(geometry);
  const data = await project(geometry);
  if (o.photons) addPhotonNoise(data, o.photons, o.seed ?? 1);
  const notes: Record<string, string> = { phantom: name, ...(o.photons ? { photons: String(o.photons) } : {}) };
  return {
    name, about, truth, fovRadius: fov, bodyHalfWidth: halfWidth, outline, hull: convexHull(truth, muWater), known: uniformDisk(truth, fov, muWater),
    scan: { geometry, data, muWater, notes }, project,
  };
}

/** Half of the width along x of the body in an image, mm. */
function halfWidthOf(img: Image2D): number {
  return momentEllipse(bodyMask(img, 0.5 * img.muWater!), img).halfWidth;
}

/** The convex hull (a polygon, counter-clockwise) of every pixel above -500 HU, by Andrew's monotone chain (common practice). */
function convexHull(img: Image2D, muWater: number): Outline {
  const g = img.grid;
  const { x0, y0 } = gridOrigin(g);
  const pts: [number, number][] = [];
  for (let j = 0; j < g.ny; j++) {
    // The leftmost and rightmost object pixels of each row carry the hull (their outer corners).
    let first = -1, last = -1;
    for (let i = 0; i < g.nx; i++) if (img.data[j * g.nx + i] > 0.5 * muWater) { if (first < 0) first = i; last = i; }
    if (first < 0) continue;
    const y = y0 + j * g.dy;
    pts.push([x0 + (first - 0.5) * g.dx, y - g.dy / 2], [x0 + (first - 0.5) * g.dx, y + g.dy / 2], [x0 + (last + 0.5) * g.dx, y - g.dy / 2], [x0 + (last + 0.5) * g.dx, y + g.dy / 2]);
  }
  pts.sort((a, b) => a[0] - b[0] || a[1] - b[1]);
  const cross = (o: number[], a: number[], b: number[]) => (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]);
  const half = (list: [number, number][]) => {
    const h: [number, number][] = [];
    for (const p of list) {
      while (h.length >= 2 && cross(h[h.length - 2], h[h.length - 1], p) <= 0) h.pop();
      h.push(p);
    }
    h.pop();
    return h;
  };
  return { shape: 'polygon', points: [...half(pts), ...half([...pts].reverse())] };
}

/** The image moved by `shift` (fractions of the body's half-width). */
function shifted(img: Image2D, shift?: [number, number]): Image2D {
  if (!shift) return img;
  const h = halfWidthOf(img);
  return { ...img, grid: { ...img.grid, cx: img.grid.cx + shift[0] * h, cy: img.grid.cy + shift[1] * h } };
}

/** test/fixtures/ct/ from this source file (tests) or from build/cli.mjs (the bundled CLI's bench). */
function fixtures(): URL {
  const here = new URL('../../../../test/fixtures/ct/', import.meta.url);
  return existsSync(fileURLToPath(here)) ? here : new URL('../test/fixtures/ct/', import.meta.url);
}

/** A real CT slice from test/fixtures/ct as mu (HU below -1000, the scanner's padding included, become air). */
export async function realSlice(file: string, muWater = MU_WATER_SLICES): Promise<Image2D> {
  const bytes = new Uint8Array(readFileSync(fileURLToPath(new URL(file, fixtures()))));
  const { image } = await readImage2D([{ name: file, bytes }], { muWater });
  const data = image.data.map((v) => Math.max(0, v));
  return { ...image, data, muWater, quantity: 'mu' };
}

/**
 * The slice with the air around the body made air: pixels outside the body mask below -500 HU
 * (lossy-compression haze of about -950 HU in the head slice) become 0; objects outside the body
 * (a head holder, the table) stay.
 */
function clearAir(img: Image2D): Image2D {
  const body = bodyMask(img, 0.5 * img.muWater!);
  const limit = 0.5 * img.muWater!;
  return { ...img, data: img.data.map((v, q) => (body[q] || v > limit ? v : 0)) };
}

/** A case from a real CT slice, projected by Joseph's method on the slice's own grid. */
export async function realSliceCase(ws: Workspace, file: 'nema-ct1-thorax.nrrd' | 'pydicom-head.nrrd', o: CaseOptions = {}): Promise<SevereCase> {
  const truth = shifted(clearAir(await realSlice(file)), o.shift);
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

/** The thorax phantom with arms (analytic projections, 4 rays per channel); the truth image covers the arms. */
export function thoraxCase(o: CaseOptions = {}): Promise<SevereCase> {
  const p0 = thorax();
  const coarse: Image2D = { grid: { nx: 160, ny: 160, dx: 4, dy: 4, cx: 0, cy: 0 }, data: new Float32Array(0), quantity: 'mu', muWater: p0.muWater };
  coarse.data = rasterize(p0, coarse.grid, 1);
  const h = o.shift ? halfWidthOf(coarse) : 0;
  const p = movedPhantom(p0, o.shift && [o.shift[0] * h, o.shift[1] * h]);
  const pixel = o.truthPixel ?? 0.8;
  const n = 2 * Math.ceil((1.02 * p.radius) / pixel);
  // The truth grid stays centred on the isocentre; a shifted phantom is rasterised where it lies.
  const truth: Image2D = { grid: { nx: n, ny: n, dx: pixel, dy: pixel, cx: 0, cy: 0 }, data: new Float32Array(0), quantity: 'mu', muWater: p.muWater };
  truth.data = rasterize(p, truth.grid, 4);
  return buildCase('thorax-phantom', 'thorax phantom with arms (analytic projections)', truth, o, async (g) => analyticSinogram(p, g, 4));
}

/**
 * The scan the page and `rimfill demo` make: the thorax phantom in the 'demo' fan geometry
 * (R 600, D 1000 mm, 720 views) with the detector cut to 345 of 1100 channels, so the field of
 * view (radius about 102 mm) covers about 60% of the body's width: moderate truncation.
 */
export function demoCase(o: CaseOptions = {}): Promise<SevereCase> {
  const geometry = cropDetector(presetGeometry('demo')!, 345).geometry;
  return thoraxCase({ ...o, geometry }).then((c) => ({ ...c, name: 'demo-scan', about: 'the page\'s demo scan (thorax phantom, demo fan, 345 of 1100 channels)' }));
}

/** The phantom with every ellipse moved by `shift` mm. */
function movedPhantom(p: EllipsePhantom, shift?: [number, number]): EllipsePhantom {
  if (!shift) return p;
  return { ...p, ellipses: p.ellipses.map((e) => ({ ...e, cx: e.cx + shift[0], cy: e.cy + shift[1] })), radius: p.radius + Math.hypot(shift[0], shift[1]) };
}
