// Named phantoms the CLI and the page offer.
import { InputError } from '../errors';
import type { EllipsePhantom } from './ellipse';
import { sheppLogan } from './shepp-logan';
import { thorax, waterCylinder } from './thorax';

export const PHANTOM_NAMES = ['thorax', 'shepp-logan', 'shepp-logan-modified', 'water'] as const;

/** A built-in phantom by name. */
export function namedPhantom(name: string): EllipsePhantom {
  switch (name) {
    case 'thorax':
      return thorax();
    case 'shepp-logan':
      return sheppLogan('original');
    case 'shepp-logan-modified':
      return sheppLogan('modified');
    case 'water':
      return waterCylinder();
    default:
      throw new InputError(`phantom: got "${name}", expected one of ${PHANTOM_NAMES.join(', ')} or an image file`);
  }
}
