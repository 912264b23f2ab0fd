// The command line's words for knowledge (README "Command line"):
//   --known x,y,r:HU       a circle (mm in the image frame), repeatable
//   --known x,y,r,z0,z1:HU a cylinder over z0..z1 mm (cone-beam volumes)
//   --known mask.nrrd:HU   a mask image (values > 0.5 inside)
//   --outline ellipse:cx,cy,a,b[,angle]   an ellipse (mm; angle in degrees)
//   --outline mask.nrrd    a mask image
import { InputError } from '../errors';
import type { KnownRegion, Outline } from './types';

const NUMBER = /^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i;

function numbers(text: string, what: string, counts: number[]): number[] {
  const parts = text.split(',').map((s) => s.trim());
  if (!counts.includes(parts.length) || parts.some((p) => !NUMBER.test(p))) {
    throw new InputError(`${what}: got "${text}", expected ${counts.join(' or ')} numbers separated by commas`);
  }
  return parts.map(Number);
}

/** One --known value; `isFile` tells a mask file name apart from numbers. */
export function parseKnown(text: string, isFile: (name: string) => boolean): KnownRegion {
  const colon = text.lastIndexOf(':');
  if (colon < 0) throw new InputError(`--known: got "${text}", expected x,y,r:HU or mask.nrrd:HU`);
  const where = text.slice(0, colon), huText = text.slice(colon + 1).trim();
  if (!NUMBER.test(huText)) throw new InputError(`--known: got "${text}", expected a value in HU after the colon`);
  const hu = Number(huText);
  if (isFile(where)) return { shape: 'mask', input: where, hu };
  const n = numbers(where, `--known "${text}"`, [3, 5]);
  const region: KnownRegion = { shape: 'circle', x: n[0], y: n[1], r: n[2], hu };
  if (n.length === 5) region.z = [n[3], n[4]];
  return region;
}

/** The --outline value. */
export function parseOutline(text: string, isFile: (name: string) => boolean): Outline {
  if (text.startsWith('ellipse:')) {
    const n = numbers(text.slice(8), `--outline "${text}"`, [4, 5]);
    return { shape: 'ellipse', cx: n[0], cy: n[1], a: n[2], b: n[3], ...(n.length === 5 ? { angleDeg: n[4] } : {}) };
  }
  if (isFile(text)) return { shape: 'mask', input: text };
  throw new InputError(`--outline: got "${text}", expected ellipse:cx,cy,a,b (mm) or a mask image file that exists`);
}
