// Images as NRRD float32 with "space directions" and "space origin" (mm, origin = centre of the
// first pixel) and rimfill.quantity mu | hu (design.md).
import { InputError } from '../errors';
import { checkGrid, huToMu, type Image2D } from '../image';
import { DEFAULT_MAX_SAMPLES, parseNrrd, writeNrrd } from './nrrd';

function vectors(text: string | undefined): number[][] {
  if (!text) return [];
  return [...text.matchAll(/\(([^)]*)\)|none/g)].map((m) => (m[1] === undefined ? [] : m[1].split(',').map(Number)));
}

/** Reads a 2D image. Values come back as mu (1/mm); HU files need mu_water (in the file or given). */
export async function readImageNrrd(bytes: Uint8Array, muWater?: number, maxSamples = DEFAULT_MAX_SAMPLES): Promise<Image2D> {
  const n = await parseNrrd(bytes, maxSamples);
  const sizes = n.sizes.filter((s, i) => !(i === 2 && s === 1));
  if (sizes.length !== 2) throw new InputError(`image: got sizes ${n.sizes.join(' ')}, expected a 2D image (one slice)`);
  const [nx, ny] = sizes;
  const dirs = vectors(n.fields['space directions']);
  const origin = vectors(n.fields['space origin'])[0];
  let dx = 1, dy = 1, x0 = -(nx - 1) / 2, y0 = -(ny - 1) / 2;
  if (dirs.length >= 2 && dirs[0].length >= 2) {
    dx = Math.hypot(...dirs[0]);
    dy = Math.hypot(...dirs[1]);
    if (Math.abs(dirs[0][1] ?? 0) > 1e-6 * dx || Math.abs(dirs[1][0] ?? 0) > 1e-6 * dy) {
      throw new InputError('image: rotated space directions are not supported; resample to an axis-aligned grid');
    }
    x0 = origin?.[0] ?? -((nx - 1) / 2) * dx;
    y0 = origin?.[1] ?? -((ny - 1) / 2) * dy;
  } else if (n.fields.spacings) {
    [dx, dy] = n.fields.spacings.split(/\s+/).map(Number);
    x0 = -((nx - 1) / 2) * dx;
    y0 = -((ny - 1) / 2) * dy;
  }
  const grid = checkGrid({ nx, ny, dx, dy, cx: x0 + ((nx - 1) / 2) * dx, cy: y0 + ((ny - 1) / 2) * dy });
  const fileMuWater = n.keys['rimfill.muWater'] !== undefined ? Number(n.keys['rimfill.muWater']) : undefined;
  const mw = muWater ?? fileMuWater;
  const fov = n.keys['rimfill.fovRadius'] !== undefined ? Number(n.keys['rimfill.fovRadius']) : undefined;
  if (fov !== undefined && !(fov >= 0)) throw new InputError(`image rimfill.fovRadius: got "${n.keys['rimfill.fovRadius']}", expected a radius in mm`);
  const quantity = n.keys['rimfill.quantity'] ?? 'mu';
  if (quantity === 'hu') {
    if (!(mw && mw > 0)) throw new InputError('image: values are HU but mu_water is unknown; give it with --mu-water');
    return { grid, data: huToMu(n.data, mw), quantity: 'mu', muWater: mw, fovRadius: fov };
  }
  if (quantity !== 'mu') throw new InputError(`image rimfill.quantity: got "${quantity}", expected mu or hu`);
  return { grid, data: n.data, quantity: 'mu', muWater: mw, fovRadius: fov };
}

/** Writes a 2D image (values as stored in `image`). */
export function writeImageNrrd(image: Image2D, compress = false): Promise<Uint8Array> {
  const g = image.grid;
  const x0 = g.cx - ((g.nx - 1) / 2) * g.dx, y0 = g.cy - ((g.ny - 1) / 2) * g.dy;
  const keys: Record<string, string> = { 'rimfill.quantity': image.quantity };
  if (image.muWater !== undefined) keys['rimfill.muWater'] = String(image.muWater);
  if (image.fovRadius !== undefined) keys['rimfill.fovRadius'] = String(image.fovRadius);
  return writeNrrd(image.data, [g.nx, g.ny], {
    'space dimension': '2',
    'space directions': `(${g.dx},0) (0,${g.dy})`,
    'space origin': `(${x0},${y0})`,
    'space units': '"mm" "mm"',
  }, keys, compress);
}
