// DICOM CT images, single files or a series of single-frame slices, parsed with npm
// "dicom-parser" (Cornerstone). Stored values become HU by the Modality LUT rescale,
// HU = stored * RescaleSlope + RescaleIntercept (DICOM PS3.3 C.11.1.1.2, C.7.6.16.2.11);
// Pixel Spacing (0028,0030) is "row spacing \ column spacing" (PS3.3 10.7.1.3); slices are
// sorted by Image Position (Patient) along the slice normal (PS3.3 C.7.6.2.1.1), which for the
// axial slices accepted here (rows and columns along +-x and +-y by Image Orientation
// (Patient)) is z. Patient coordinates (x to the patient's left, y posterior, z superior;
// PS3.3 C.7.6.2.1.1) become Rimfill's (x left, y ANTERIOR, as the demo thorax has its
// sternum at +y), so y changes sign: an image shown with +y up has the patient's front at the
// top and the patient's left on the right, as radiologists view axial slices.
import * as dicomParser from 'dicom-parser';
import { InputError } from '../errors';
import { checkAllocation, type ReadLimits } from './limits';
import { baseName, type NamedBytes } from './named-file';
import { decodeSamples, type SampleType } from './sample-types';
import type { DicomContext, ImageVolume } from './volume';

/** Uncompressed transfer syntaxes (PS3.5 A.1-A.3) and their byte order. */
const TRANSFER_SYNTAXES: Record<string, boolean> = {
  '1.2.840.10008.1.2': true, // implicit VR little endian
  '1.2.840.10008.1.2.1': true, // explicit VR little endian
  '1.2.840.10008.1.2.2': false, // explicit VR big endian (retired)
};

interface Slice {
  name: string;
  rows: number;
  cols: number;
  rowSpacing: number;
  colSpacing: number;
  orientation: number[];
  position?: number[];
  instance: number;
  series: string;
  /** Rescaled values (HU), stored order. */
  hu: Float32Array;
  paddingPixels: number;
  context: DicomContext;
  /** Carried attributes left out because they are not plain ASCII. */
  dropped: string[];
}

/** Patient, study and frame attributes kept with the image (volume.ts DicomContext) and their tags. */
const CONTEXT_TAGS: Array<[keyof DicomContext, string]> = [
  ['PatientName', 'x00100010'], ['PatientID', 'x00100020'], ['PatientBirthDate', 'x00100030'], ['PatientSex', 'x00100040'],
  ['PatientAge', 'x00101010'], ['StudyInstanceUID', 'x0020000d'], ['StudyDate', 'x00080020'], ['StudyTime', 'x00080030'],
  ['StudyID', 'x00200010'], ['AccessionNumber', 'x00080050'], ['ReferringPhysicianName', 'x00080090'],
  ['PatientPosition', 'x00185100'], ['FrameOfReferenceUID', 'x00200052'],
];

/** The context attributes present, as text; values outside printable ASCII are left out (their character set is not decoded here). */
function contextOf(ds: dicomParser.DataSet): { context: DicomContext; dropped: string[] } {
  const context: DicomContext = {};
  const dropped: string[] = [];
  for (const [key, tag] of CONTEXT_TAGS) {
    const v = ds.string(tag);
    if (v === undefined || v === '') continue;
    if (/^[\x20-\x7e]*$/.test(v)) context[key] = v;
    else dropped.push(key);
  }
  return { context, dropped };
}

/** Whether bytes look like a DICOM Part 10 file ("DICM" after the 128-byte preamble). */
export function looksLikeDicom(b: Uint8Array): boolean {
  return b.length >= 132 && b[128] === 0x44 && b[129] === 0x49 && b[130] === 0x43 && b[131] === 0x4d;
}

function numbersOf(ds: dicomParser.DataSet, tag: string, n: number): number[] | undefined {
  const text = ds.string(tag);
  if (text === undefined) return undefined;
  const v = text.split('\\').map(Number);
  if (v.length !== n || v.some((x) => !Number.isFinite(x))) throw new InputError(`DICOM ${tag}: got "${text.slice(0, 60)}", expected ${n} numbers`);
  return v;
}

function parse(bytes: Uint8Array, name: string): dicomParser.DataSet {
  try {
    return dicomParser.parseDicom(bytes);
  } catch (err) {
    const why = err instanceof Error ? err.message : typeof err === 'string' ? err : (err as { exception?: string })?.exception ?? String(err);
    throw new InputError(`DICOM ${name}: cannot parse (${why})`);
  }
}

function readSlice(file: NamedBytes, limits: ReadLimits | undefined): Slice {
  const name = baseName(file.name);
  const ds = parse(file.bytes, name);
  const fail = (msg: string): never => {
    throw new InputError(`DICOM ${name}: ${msg}`);
  };
  const ts = ds.string('x00020010') ?? '1.2.840.10008.1.2';
  const le = TRANSFER_SYNTAXES[ts];
  if (le === undefined) fail(`transfer syntax ${ts} is compressed or unknown; expected uncompressed data (decompress the series first)`);
  const modality = ds.string('x00080060');
  if (modality !== 'CT') fail(`modality "${modality ?? 'missing'}", expected CT`);
  const rows = ds.uint16('x00280010') ?? 0, cols = ds.uint16('x00280011') ?? 0;
  if (rows < 1 || cols < 1) fail(`image size ${cols} x ${rows}, expected positive Rows and Columns`);
  if ((ds.uint16('x00280002') ?? 1) !== 1) fail('SamplesPerPixel must be 1 (grey-level CT)');
  const frames = Number(ds.string('x00280008') ?? 1);
  if (frames !== 1) fail(`${ds.string('x00280008')} frames; expected single-frame slices`);
  const photometric = ds.string('x00280004') ?? 'MONOCHROME2';
  if (photometric !== 'MONOCHROME2') fail(`photometric interpretation ${photometric}, expected MONOCHROME2`);
  const allocated = ds.uint16('x00280100') ?? 0;
  if (allocated !== 16 && allocated !== 8 && allocated !== 32) fail(`BitsAllocated ${allocated}, expected 8, 16 or 32`);
  const stored = ds.uint16('x00280101') ?? allocated;
  if (stored < 1 || stored > allocated) fail(`BitsStored ${stored}, expected 1 to ${allocated}`);
  const signed = (ds.uint16('x00280103') ?? 0) === 1;
  const spacing = numbersOf(ds, 'x00280030', 2) ?? fail('Pixel Spacing (0028,0030) is missing');
  if (!(spacing[0] > 0 && spacing[1] > 0)) fail(`Pixel Spacing ${spacing.join('\\')}, expected positive spacings in mm`);
  const slope = numbersOf(ds, 'x00281053', 1)?.[0] ?? 1;
  const intercept = numbersOf(ds, 'x00281052', 1)?.[0] ?? 0;
  if (slope === 0) fail('Rescale Slope is 0');
  const pixel = ds.elements.x7fe00010 ?? fail('no Pixel Data (7FE0,0010)');
  if (pixel.encapsulatedPixelData) fail('pixel data are encapsulated (compressed); expected native pixel data');
  const count = rows * cols;
  const bytesPer = allocated / 8;
  if (pixel.length < count * bytesPer || pixel.dataOffset + count * bytesPer > file.bytes.length) {
    fail(`Pixel Data holds ${Math.min(pixel.length, file.bytes.length - pixel.dataOffset)} bytes, ${rows} x ${cols} x ${bytesPer} expected`);
  }
  checkAllocation(count * 4, limits, `DICOM ${name}`);
  const type = `${signed ? 'int' : 'uint'}${allocated}` as SampleType;
  const hu = new Float32Array(count);
  decodeSamples(file.bytes.subarray(pixel.dataOffset, pixel.dataOffset + count * bytesPer), type, le, count, hu);
  // Only the low BitsStored bits carry the value (PS3.5 8.1.1); sign-extend signed data.
  const shift = 32 - stored;
  const padding = signed ? ds.int16('x00280120') : ds.uint16('x00280120');
  let paddingPixels = 0;
  for (let i = 0; i < count; i++) {
    let v = hu[i];
    if (stored < allocated) v = signed ? ((v << shift) >> shift) : v & ((1 << stored) - 1);
    if (padding !== undefined && v === padding) {
      hu[i] = -1000; // padding marks pixels outside the reconstructed field: air (common practice)
      paddingPixels++;
      continue;
    }
    hu[i] = v * slope + intercept;
  }
  const orientation = numbersOf(ds, 'x00200037', 6) ?? [1, 0, 0, 0, 1, 0];
  return {
    name, rows, cols, rowSpacing: spacing[0], colSpacing: spacing[1], orientation,
    position: numbersOf(ds, 'x00200032', 3), instance: Number(ds.string('x00200013') ?? 0),
    series: ds.string('x0020000e') ?? '', hu, paddingPixels, ...contextOf(ds),
  };
}

/** +1 or -1 when the cosine vector lies along `axis` (0 = x, 1 = y), else 0. */
function alongAxis(v: number[], axis: number): number {
  const tol = 1e-3;
  for (let k = 0; k < 3; k++) {
    if (k !== axis && Math.abs(v[k]) > tol) return 0;
  }
  return Math.abs(Math.abs(v[axis]) - 1) <= tol ? Math.sign(v[axis]) : 0;
}

/** Sorts slices along z and returns their spacing (mm), checking it is even. */
function stack(slices: Slice[]): { sorted: Slice[]; dz: number; z0: number; warning?: string } {
  if (slices.length === 1) return { sorted: slices, dz: 1, z0: slices[0].position?.[2] ?? 0 };
  if (slices.some((s) => !s.position)) {
    const sorted = [...slices].sort((a, b) => a.instance - b.instance);
    return { sorted, dz: 1, z0: 0, warning: 'DICOM series: slices lack Image Position (Patient); sorted by Instance Number with 1 mm spacing assumed' };
  }
  const sorted = [...slices].sort((a, b) => a.position![2] - b.position![2]);
  const gaps = sorted.slice(1).map((s, i) => s.position![2] - sorted[i].position![2]);
  const dz = gaps.reduce((a, b) => a + b, 0) / gaps.length;
  if (!(dz > 0) || gaps.some((g) => g <= 0)) throw new InputError(`DICOM series: two slices share position z = ${sorted[gaps.findIndex((g) => g <= 0)].position![2]} mm`);
  if (gaps.some((g) => Math.abs(g - dz) > 0.01 * dz + 1e-3)) {
    throw new InputError(`DICOM series: slice spacing varies from ${Math.min(...gaps).toFixed(3)} to ${Math.max(...gaps).toFixed(3)} mm; expected evenly spaced slices`);
  }
  return { sorted, dz, z0: sorted[0].position![2] };
}

/**
 * Reads DICOM CT files (one image, or the slices of one series) as a volume in HU: x toward
 * the patient's left, y anterior, z superior (slices in increasing z).
 */
export function readDicomSeries(files: readonly NamedBytes[], limits?: ReadLimits): { volume: ImageVolume; paddingPixels: number; warnings: string[] } {
  if (files.length === 0) throw new InputError('DICOM: no files given');
  const slices = files.map((f) => readSlice(f, limits));
  const a = slices[0];
  const sx = alongAxis(a.orientation.slice(0, 3), 0), sy = alongAxis(a.orientation.slice(3, 6), 1);
  if (!sx || !sy) {
    throw new InputError(`DICOM ${a.name}: Image Orientation (Patient) ${a.orientation.join('\\')}; expected axial slices (rows along +-x, columns along +-y)`);
  }
  for (const s of slices) {
    if (s.series !== a.series) throw new InputError(`DICOM: ${s.name} belongs to another series than ${a.name}; give the slices of one series`);
    if (s.rows !== a.rows || s.cols !== a.cols || s.rowSpacing !== a.rowSpacing || s.colSpacing !== a.colSpacing) {
      throw new InputError(`DICOM: ${s.name} is ${s.cols} x ${s.rows} at ${s.colSpacing} x ${s.rowSpacing} mm, ${a.name} is ${a.cols} x ${a.rows} at ${a.colSpacing} x ${a.rowSpacing} mm`);
    }
    if (s.orientation.some((v, i) => Math.abs(v - a.orientation[i]) > 1e-3)) throw new InputError(`DICOM: ${s.name} has another orientation than ${a.name}`);
  }
  const { sorted, dz, z0, warning } = stack(slices);
  const nx = a.cols, ny = a.rows, n = nx * ny;
  checkAllocation(sorted.length * n * 4 * 2, limits, `DICOM series of ${sorted.length} slices of ${nx} x ${ny}`);
  const data = new Float32Array(sorted.length * n);
  // Stored row r lies at patient y = p_y + sy r dy, i.e. Rimfill y = -p_y - sy r dy: rows are
  // reversed when the columns run posterior (sy > 0), columns when the rows run right (sx < 0).
  sorted.forEach((s, k) => {
    for (let j = 0; j < ny; j++) {
      const srcRow = sy > 0 ? ny - 1 - j : j;
      for (let i = 0; i < nx; i++) data[k * n + j * nx + i] = s.hu[srcRow * nx + (sx > 0 ? i : nx - 1 - i)];
    }
  });
  const dx = a.colSpacing, dy = a.rowSpacing;
  const p = a.position ?? [0, 0, 0];
  // Centre of voxel (0, 0) in Rimfill coordinates; the stored first pixel sits at Image Position.
  const x0 = sx > 0 ? p[0] : p[0] - (nx - 1) * dx;
  const y0 = sy > 0 ? -p[1] - (ny - 1) * dy : -p[1];
  const warnings = warning ? [warning] : [];
  if (a.dropped.length) warnings.push(`DICOM ${a.name}: ${a.dropped.join(', ')} hold characters beyond plain ASCII and are not carried to exports`);
  return {
    volume: { nx, ny, nz: sorted.length, spacing: [dx, dy, dz], origin: [x0, y0, z0], data, quantity: 'hu', format: 'DICOM', dicom: a.context },
    paddingPixels: slices.reduce((t, s) => t + s.paddingPixels, 0),
    warnings,
  };
}
