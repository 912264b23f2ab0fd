// An object mask from an image by a threshold: the pixels above a level, grouped into 4-connected
// parts, small specks (noise, a stray bright pixel) dropped, and the holes filled (lungs,
// airways, bowel gas), since an outline goes around the body, not around its tissue. Used for
// the outline a user takes from an earlier full-field scan or a scout reconstruction, and by the
// accuracy bench for the body of its cases.
import { InputError } from '../errors';
import type { Image2D } from '../image';

/** Parts smaller than this share of the largest one are dropped (specks of noise). */
const SPECK_SHARE = 0.01;

/** 4-connected parts of the pixels where `inside` holds: a label per pixel (0: outside) and each part's size (index label - 1). */
export function connectedParts(nx: number, ny: number, inside: (q: number) => boolean): { label: Int32Array; sizes: number[] } {
  const label = new Int32Array(nx * ny);
  const sizes: number[] = [];
  const stack: number[] = [];
  for (let seed = 0; seed < label.length; seed++) {
    if (label[seed] || !inside(seed)) continue;
    const id = sizes.length + 1;
    let size = 0;
    stack.push(seed);
    while (stack.length) {
      const q = stack.pop()!;
      if (label[q] || !inside(q)) continue;
      label[q] = id;
      size++;
      const i = q % nx, j = (q - i) / nx;
      if (i > 0) stack.push(q - 1);
      if (i < nx - 1) stack.push(q + 1);
      if (j > 0) stack.push(q - nx);
      if (j < ny - 1) stack.push(q + nx);
    }
    sizes.push(size);
  }
  return { label, sizes };
}

/**
 * The mask with its holes filled: every pixel that cannot be reached from the image border
 * without crossing the mask becomes part of it.
 */
export function fillHoles(mask: Uint8Array, nx: number, ny: number): Uint8Array {
  const outside = new Uint8Array(mask.length);
  const stack: number[] = [];
  for (let i = 0; i < nx; i++) stack.push(i, (ny - 1) * nx + i);
  for (let j = 0; j < ny; j++) stack.push(j * nx, j * nx + nx - 1);
  while (stack.length) {
    const q = stack.pop()!;
    if (outside[q] || mask[q]) continue;
    outside[q] = 1;
    const i = q % nx, j = (q - i) / nx;
    if (i > 0) stack.push(q - 1);
    if (i < nx - 1) stack.push(q + 1);
    if (j > 0) stack.push(q - nx);
    if (j < ny - 1) stack.push(q + nx);
  }
  return Uint8Array.from(outside, (o) => 1 - o);
}

/** The body: the largest 4-connected set of pixels above `level` (mu, 1/mm), its holes filled. */
export function bodyMask(img: Image2D, level: number): Uint8Array {
  const g = img.grid;
  const { label, sizes } = connectedParts(g.nx, g.ny, (q) => img.data[q] > level);
  const best = sizes.indexOf(Math.max(0, ...sizes)) + 1;
  return fillHoles(Uint8Array.from(label, (l) => (l === best && best > 0 ? 1 : 0)), g.nx, g.ny);
}

export interface ThresholdMask {
  /** 1 inside the object, on the image's grid. */
  mask: Uint8Array;
  /** Pixels inside. */
  pixels: number;
  /** Separate parts kept (the body, arms, a holder). */
  parts: number;
  /** Pixels of the specks dropped. */
  dropped: number;
}

/**
 * Every part of the object above `level` (mu, 1/mm; e.g. -500 HU, common practice for a body
 * mask, REFERENCES.md [body-threshold]) that is at least 1% of the largest part, holes filled.
 * Throws InputError (naming `what`) when nothing or everything lies above the level, or a value
 * is not a finite number.
 */
export function thresholdMask(img: Image2D, level: number, what = 'threshold'): ThresholdMask {
  const g = img.grid, d = img.data;
  if (!Number.isFinite(level)) throw new InputError(`${what}: got ${level}, expected a finite level`);
  let bad = 0;
  for (let q = 0; q < d.length; q++) if (!Number.isFinite(d[q])) bad++;
  if (bad) throw new InputError(`${what}: the image has ${bad} pixels that are not finite numbers: it cannot be thresholded`);
  const { label, sizes } = connectedParts(g.nx, g.ny, (q) => d[q] > level);
  const largest = Math.max(0, ...sizes);
  if (!largest) throw new InputError(`${what}: no pixel of the image lies above the level; choose a lower one`);
  const keep = sizes.map((s) => s >= SPECK_SHARE * largest);
  const kept = Uint8Array.from(label, (l) => (l > 0 && keep[l - 1] ? 1 : 0));
  const mask = fillHoles(kept, g.nx, g.ny);
  let pixels = 0;
  for (let q = 0; q < mask.length; q++) pixels += mask[q];
  if (pixels === mask.length) throw new InputError(`${what}: every pixel of the image lies inside (the object fills the image, or the level is below the background); choose a higher level`);
  const dropped = sizes.reduce((s, n, k) => s + (keep[k] ? 0 : n), 0);
  return { mask, pixels, parts: keep.filter(Boolean).length, dropped };
}
