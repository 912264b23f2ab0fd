// Named 3D phantoms for cone-beam scans: the same names as the 2D phantoms (index.ts), so
// `--phantom thorax` means the demo thorax in either kind of scan.
import { InputError } from '../errors';
import { sheppLogan3d } from './shepp-logan-3d';
import type { SolidPhantom } from './solid';
import { thorax3d, waterCylinder3d } from './thorax-3d';

export const SOLID_PHANTOM_NAMES = ['thorax', 'shepp-logan', 'shepp-logan-modified', 'water'] as const;

/** A built-in 3D phantom by name. */
export function namedSolidPhantom(name: string): SolidPhantom {
  switch (name) {
    case 'thorax':
      return thorax3d();
    case 'shepp-logan':
      return sheppLogan3d('original');
    case 'shepp-logan-modified':
      return sheppLogan3d('modified');
    case 'water':
      return waterCylinder3d();
    default:
      throw new InputError(`phantom: got "${name}", expected one of ${SOLID_PHANTOM_NAMES.join(', ')} or a volume file`);
  }
}
