// Volumes as NRRD float32 (design.md): sizes <nx> <ny> <nz>, "space directions" (one vector per
// axis, mm) and "space origin" (centre of the first voxel, mm), rimfill.quantity mu | hu, and
// the optional rimfill.muWater, rimfill.fovRadius, rimfill.fovHalfHeight.
// NRRD format: http://teem.sourceforge.net/nrrd/format.html ("space directions", "space origin").
import { InputError } from '../errors';
import { huToMu } from '../image';
import { checkVolumeGrid, volumeOrigin, type Volume } from '../volume';
import type { ReadLimits } from './limits';
import { parseNrrd, writeNrrd } from './nrrd';

/** "(a,b,c) (d,e,f) none" -> [[a,b,c],[d,e,f],[]]. */
function vectors(text: string | undefined): number[][] {
  if (!text) return [];
  return [...text.matchAll(/\(([^)]*)\)|none/g)].map((m) => (m[1] === undefined ? [] : m[1].split(',').map(Number)));
}

function optionalNumber(keys: Record<string, string>, key: string, what: string): number | undefined {
  if (keys[key] === undefined) return undefined;
  const v = Number(keys[key]);
  if (!(v >= 0) || !Number.isFinite(v)) throw new InputError(`volume ${key}: got "${keys[key]}", expected ${what}`);
  return v;
}

/** Reads a volume. Values come back as mu (1/mm); HU files need mu_water (in the file or given). */
export async function readVolumeNrrd(bytes: Uint8Array, muWater?: number, limits: ReadLimits = {}): Promise<Volume> {
  const n = await parseNrrd(bytes, limits);
  if (n.sizes.length !== 3) throw new InputError(`volume: got sizes ${n.sizes.join(' ')}, expected three axes <nx> <ny> <nz>`);
  const [nx, ny, nz] = n.sizes;
  const dirs = vectors(n.fields['space directions']);
  const origin = vectors(n.fields['space origin'])[0];
  let spacing = [1, 1, 1];
  let first: number[] | undefined;
  if (dirs.length === 3 && dirs.every((d) => d.length === 3 && d.every(Number.isFinite))) {
    spacing = dirs.map((d) => Math.hypot(...d));
    const offAxis = dirs.some((d, i) => d.some((x, j) => j !== i && Math.abs(x) > 1e-6 * spacing[i]));
    if (offAxis) throw new InputError('volume: rotated space directions are not supported; resample to an axis-aligned grid');
    if (dirs.some((d, i) => d[i] < 0)) throw new InputError('volume: space directions point against the axes; flip the volume so that they are positive');
    if (origin && origin.length === 3 && origin.every(Number.isFinite)) first = origin;
  } else if (n.fields['space directions']) {
    throw new InputError(`volume space directions: got "${n.fields['space directions']}", expected three vectors (dx,0,0) (0,dy,0) (0,0,dz) in mm`);
  } else if (n.fields.spacings) {
    spacing = n.fields.spacings.split(/\s+/).map(Number);
    if (spacing.length !== 3 || !spacing.every((s) => s > 0)) throw new InputError(`volume spacings: got "${n.fields.spacings}", expected three positive numbers`);
  }
  const [dx, dy, dz] = spacing;
  const centre = (o: number | undefined, s: number, size: number) => (o === undefined ? 0 : o + ((size - 1) / 2) * s);
  const grid = checkVolumeGrid({ nx, ny, nz, dx, dy, dz, cx: centre(first?.[0], dx, nx), cy: centre(first?.[1], dy, ny), cz: centre(first?.[2], dz, nz) });
  const fileMuWater = n.keys['rimfill.muWater'] !== undefined ? Number(n.keys['rimfill.muWater']) : undefined;
  const mw = muWater ?? fileMuWater;
  const fovRadius = optionalNumber(n.keys, 'rimfill.fovRadius', 'a radius in mm');
  const fovHalfHeight = optionalNumber(n.keys, 'rimfill.fovHalfHeight', 'a half height in mm');
  const quantity = n.keys['rimfill.quantity'] ?? 'mu';
  if (quantity === 'hu') {
    if (!(mw && mw > 0)) throw new InputError('volume: values are HU but mu_water is unknown; give it with --mu-water');
    return { grid, data: huToMu(n.data, mw), quantity: 'mu', muWater: mw, fovRadius, fovHalfHeight };
  }
  if (quantity !== 'mu') throw new InputError(`volume rimfill.quantity: got "${quantity}", expected mu or hu`);
  return { grid, data: n.data, quantity: 'mu', muWater: mw, fovRadius, fovHalfHeight };
}

/** Writes a volume (values as stored in `volume`). */
export function writeVolumeNrrd(volume: Volume, compress = false): Promise<Uint8Array> {
  const g = volume.grid;
  const { x0, y0, z0 } = volumeOrigin(g);
  const keys: Record<string, string> = { 'rimfill.quantity': volume.quantity };
  if (volume.muWater !== undefined) keys['rimfill.muWater'] = String(volume.muWater);
  if (volume.fovRadius !== undefined) keys['rimfill.fovRadius'] = String(volume.fovRadius);
  if (volume.fovHalfHeight !== undefined) keys['rimfill.fovHalfHeight'] = String(volume.fovHalfHeight);
  return writeNrrd(volume.data, [g.nx, g.ny, g.nz], {
    'space dimension': '3',
    'space directions': `(${g.dx},0,0) (0,${g.dy},0) (0,0,${g.dz})`,
    'space origin': `(${x0},${y0},${z0})`,
    'space units': '"mm" "mm" "mm"',
    kinds: 'domain domain domain',
  }, keys, compress);
}

/** True when NRRD bytes hold a 3-axis array with more than one slice (a volume, not an image). */
export function isVolumeNrrd(bytes: Uint8Array): boolean {
  const head = new TextDecoder().decode(bytes.subarray(0, Math.min(bytes.length, 4096)));
  const m = /^sizes:\s*([^\n]*)$/m.exec(head);
  const sizes = m ? m[1].trim().split(/\s+/).map(Number) : [];
  return sizes.length === 3 && sizes[2] > 1;
}
