// The one entry point for writing images: NRRD or MetaImage (.mha, or .mhd + .raw) as float32
// mu, float32 HU or int16 HU, and PNG at a display window.
import { InputError } from '../errors';
import { muToHu, type Image2D } from '../image';
import { writeImageNrrd } from './image-nrrd';
import { writeMetaImage } from './metaimage';
import { baseName, type NamedBytes } from './named-file';
import { writtenAnatomicalOrientation } from './patient-frame';
import { checkWindow, writePng, type DisplayWindow } from './png';
import { imageAsVolume, MU_WATER_REMEDY, toLps } from './volume';

export type ImageFileFormat = 'nrrd' | 'mha' | 'mhd' | 'png';

export interface ImageWriteOptions {
  format: ImageFileFormat;
  /**
   * Values written: mu (1/mm) or HU. Default: as the image holds them; for PNG, HU (the window
   * is then in HU, as the trade gives windows), converted with the image's mu_water.
   */
  quantity?: 'mu' | 'hu';
  /** Sample type; int16 only for HU (rounded to whole HU, clamped to -32768..32767). */
  sampleType?: 'float32' | 'int16';
  /** Window for PNG, in the written quantity's units. */
  window?: DisplayWindow;
  compress?: boolean;
}

export interface ImageWriteResult {
  files: NamedBytes[];
  /** Pixels outside the int16 range (clamped) or non-finite (PNG: drawn black). */
  clamped: number;
  warnings: string[];
}

/** The format an output name asks for, from its extension. */
export function formatFromName(name: string): ImageFileFormat {
  const m = /\.(nrrd|mha|mhd|png)$/i.exec(baseName(name));
  if (!m) throw new InputError(`output ${name}: expected a name ending in .nrrd, .mha, .mhd or .png`);
  return m[1].toLowerCase() as ImageFileFormat;
}

function inQuantity(image: Image2D, q: 'mu' | 'hu', png: boolean): Image2D {
  if (image.quantity === q) return image;
  const mw = image.muWater;
  if (!(mw && mw > 0)) {
    if (png) {
      throw new InputError('PNG: the window is in HU, but the image holds mu (1/mm) and its mu_water is unknown', {
        remedy: { cli: 'give --mu-water X, or give the window in 1/mm with --mu', page: "set the scan's mu of water first" },
      });
    }
    throw new InputError(`cannot write ${q === 'hu' ? 'HU' : 'mu'}: mu_water is unknown`, { remedy: MU_WATER_REMEDY });
  }
  if (q === 'hu') return { ...image, data: muToHu(image.data, mw), quantity: 'hu' };
  const s = mw / 1000;
  return { ...image, data: image.data.map((h) => mw + h * s), quantity: 'mu' };
}

function countInt16Overflow(data: Float32Array): number {
  let n = 0;
  for (let i = 0; i < data.length; i++) {
    const v = Math.round(data[i]);
    if (!(v >= -32768 && v <= 32767)) n++;
  }
  return n;
}

/**
 * A PNG of one grey level shows nothing. When the image itself is uniform, say so; when it is
 * not, the window misses it: refuse, with the image's range, rather than write a blank picture.
 */
function onePictureLevel(image: Image2D, w: DisplayWindow, levels: number): string[] {
  if (levels > 1) return [];
  let lo = Infinity, hi = -Infinity;
  for (const v of image.data) {
    if (!Number.isFinite(v)) continue;
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  const unit = image.quantity === 'hu' ? 'HU' : '/mm';
  const show = (v: number) => String(image.quantity === 'hu' ? Math.round(v * 10) / 10 : Number(v.toPrecision(4)));
  if (!(hi > lo)) return [`the image is uniform (${lo === Infinity ? 'no finite value' : `${show(lo)} ${unit}`}): the picture is one grey level`];
  throw new InputError(`PNG: the window ${show(w.level - w.width / 2)} to ${show(w.level + w.width / 2)} ${unit} misses the image, which holds ${show(lo)} to ${show(hi)} ${unit}: ` +
    'every pixel would be drawn the same grey', { remedy: { cli: 'choose --window and --level within that range', page: 'choose a window within that range' } });
}

/** Writes an image; `name` gives the base name of the files. */
export async function writeImageFile(image: Image2D, name: string, o: ImageWriteOptions): Promise<ImageWriteResult> {
  const png = o.format === 'png';
  const out = inQuantity(image, o.quantity ?? (png ? 'hu' : image.quantity), png);
  const type = o.sampleType ?? 'float32';
  if (type === 'int16' && out.quantity !== 'hu') {
    throw new InputError('int16 output holds whole HU', { remedy: { cli: 'write HU (--hu) or float32', page: 'write HU, or float32' } });
  }
  const warnings: string[] = [];
  const clamped = type === 'int16' ? countInt16Overflow(out.data) : 0;
  if (clamped) warnings.push(`${clamped} pixels lie outside the int16 range (or are not finite) and were clamped`);
  const base = baseName(name).replace(/\.(nrrd|mha|mhd|raw|png)$/i, '');
  if (o.format === 'png') {
    if (!o.window) throw new InputError('PNG output needs a window', { remedy: { cli: 'give --window W --level L', page: 'choose a window' } });
    const picture = await writePng(out, checkWindow(o.window));
    if (picture.nonFinite) warnings.push(`${picture.nonFinite} pixels are not finite numbers and were drawn black`);
    warnings.push(...onePictureLevel(out, o.window, picture.levels));
    return { files: [{ name: `${base}.png`, bytes: picture.bytes }], clamped: picture.nonFinite, warnings };
  }
  if (o.format === 'nrrd') return { files: [{ name: `${base}.nrrd`, bytes: await writeImageNrrd(out, o.compress, type) }], clamped, warnings };
  const keys: Record<string, string> = { RimfillQuantity: out.quantity };
  if (out.muWater !== undefined) keys.RimfillMuWater = String(out.muWater);
  if (out.fovRadius !== undefined) keys.RimfillFovRadius = String(out.fovRadius);
  // The patient frame LPS with rows from anterior to posterior (patient-frame.ts).
  const v = imageAsVolume(out, 'MetaImage');
  const lps = toLps(v);
  const files = await writeMetaImage(lps.data, {
    sizes: [v.nx, v.ny], spacing: [v.spacing[0], v.spacing[1]], offset: lps.origin.slice(0, 2),
    anatomicalOrientation: writtenAnatomicalOrientation(2),
    keys, type, compress: o.compress, detachedName: o.format === 'mhd' ? base : undefined,
  });
  if (o.format === 'mha') files[0].name = `${base}.mha`;
  return { files, clamped, warnings };
}
