// Which reader a set of files needs, decided by content first and extension second. Multi-file
// inputs: a header with its data file (NRRD .nhdr, MetaImage .mhd, raw + .json), or files of
// one kind (DICOM slices, TIFF frames).
import { InputError } from '../errors';
import { looksLikeDicom } from './dicom';
import { looksLikeMetaImage } from './metaimage';
import { baseName, extension, type NamedBytes } from './named-file';
import { findSidecar } from './raw-json';
import { looksLikeTiff } from './tiff-structure';

export type FileFormat = 'nrrd' | 'metaimage' | 'raw-json' | 'tiff' | 'dicom';

function isNrrd(b: Uint8Array): boolean {
  return b.length >= 8 && new TextDecoder().decode(b.subarray(0, 7)) === 'NRRD000';
}

function kindOf(f: NamedBytes): FileFormat | undefined {
  if (isNrrd(f.bytes)) return 'nrrd';
  // DICOM first: a DICOM preamble may itself hold a TIFF header (PS3.10 7.5).
  if (looksLikeDicom(f.bytes)) return 'dicom';
  if (looksLikeTiff(f.bytes)) return 'tiff';
  const ext = extension(f.name);
  if (ext === 'mha' || ext === 'mhd' || looksLikeMetaImage(f.bytes)) return 'metaimage';
  if (ext === 'json') return 'raw-json';
  return undefined;
}

/**
 * The format of the input and the files in reading order (the header first for header + data
 * pairs). Throws InputError naming the files when no reader fits.
 */
export function detectFormat(files: readonly NamedBytes[]): { format: FileFormat; files: NamedBytes[] } {
  if (files.length === 0) throw new InputError('no input files given');
  const kinds = files.map(kindOf);
  if (findSidecar(files) && files.length <= 2) {
    const side = files.find((f) => extension(f.name) === 'json')!;
    return { format: 'raw-json', files: [side, ...files.filter((f) => f !== side)] };
  }
  for (const header of ['nrrd', 'metaimage'] as const) {
    const at = kinds.indexOf(header);
    if (at >= 0 && kinds.filter((k) => k === header).length === 1) {
      return { format: header, files: [files[at], ...files.filter((_, i) => i !== at)] };
    }
  }
  for (const stack of ['tiff', 'dicom'] as const) {
    if (kinds[0] === stack) {
      const odd = files.findIndex((_, i) => kinds[i] !== stack);
      if (odd >= 0) throw new InputError(`${baseName(files[odd].name)} is not ${stack === 'tiff' ? 'a TIFF' : 'a DICOM'} file like ${baseName(files[0].name)}; give files of one kind`);
      return { format: stack, files: [...files] };
    }
  }
  throw new InputError(`${baseName(files[0].name)}: unknown format; expected NRRD, MetaImage (.mha/.mhd), raw data with a .json sidecar, TIFF or DICOM`);
}
