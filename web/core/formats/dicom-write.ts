// Images and volumes out as a DICOM CT image series (PS3.3 A.3, CT Image IOD): one single-frame
// instance per axial slice, explicit VR little endian, written by npm "dcmjs" (MIT). Values are
// 16-bit signed with the Modality LUT rescale to HU (PS3.3 C.11.1.1.2); positions and
// orientation are in the patient frame LPS (PS3.3 C.7.6.2.1.1; patient-frame.ts), rows from
// anterior to posterior. The instances are marked DERIVED / SECONDARY and describe the method
// and its knowledge; UIDs are made locally (dicom-uid.ts). Patient and study attributes are
// copied only from what the input carried (a DICOM input), else left empty (Type 2).
import dcmjs from 'dcmjs';
import { InputError } from '../errors';
import { IMPLEMENTATION_CLASS_UID, newUid } from './dicom-uid';
import type { NamedBytes } from './named-file';
import { toLps, type DicomContext, type ImageVolume } from './volume';

const CT_IMAGE_STORAGE = '1.2.840.10008.5.1.4.1.1.2';
const EXPLICIT_VR_LITTLE_ENDIAN = '1.2.840.10008.1.2.1';
/** A series number well away from an acquisition's usual 1, 2, 3... (Type 2; common practice for derived series). */
const SERIES_NUMBER = '9001';

export interface DicomExport {
  /** The image (one slice) or volume, in HU, in Rimfill's frame. */
  volume: ImageVolume;
  /** The method and its knowledge in words (a recipe label): SeriesDescription (64 characters); default the volume's own. */
  description?: string;
  /** The same at length (every known region spelt out): DerivationDescription; default the description. */
  derivation?: string;
  /** When the instances are made (default now). */
  now?: Date;
  /** Random bytes for UIDs (tests). */
  random?: (n: number) => Uint8Array;
}

export interface DicomSeries {
  files: NamedBytes[];
  rescale: { slope: number; intercept: number };
  seriesUid: string;
  warnings: string[];
}

/** A decimal string (DS) of at most 16 characters (PS3.5 6.2). */
export function ds(x: number): string {
  for (let p = 16; p > 0; p--) {
    const s = Number(x.toPrecision(p)).toString();
    if (s.length <= 16) return s;
  }
  return x.toExponential(6);
}

/** Slope and intercept (as DS strings can hold them) that fit [lo, hi] HU into int16: 1 HU steps when they fit. */
export function rescaleFor(lo: number, hi: number): { slope: number; intercept: number } {
  if (Math.round(lo) >= -32768 && Math.round(hi) <= 32767) return { slope: 1, intercept: 0 };
  const slope = Number(ds((hi - lo) / 65534));
  return { slope, intercept: Number(ds(lo + 32767 * slope)) };
}

const two = (n: number) => String(n).padStart(2, '0');
const dicomDate = (d: Date) => `${d.getFullYear()}${two(d.getMonth() + 1)}${two(d.getDate())}`;
const dicomTime = (d: Date) => `${two(d.getHours())}${two(d.getMinutes())}${two(d.getSeconds())}`;

/** The value range of the data, refusing values that are not finite numbers. */
function range(data: Float32Array): [number, number] {
  let lo = Infinity, hi = -Infinity, bad = 0;
  for (const v of data) {
    if (!Number.isFinite(v)) bad++;
    else {
      lo = Math.min(lo, v);
      hi = Math.max(hi, v);
    }
  }
  if (bad) throw new InputError(`DICOM export: ${bad} of ${data.length} values are not finite numbers (NaN or infinity); DICOM cannot hold them`);
  return [lo, hi];
}

/** Patient and study attributes: the input's, else empty (Type 2). */
function carried(context: DicomContext | undefined): Record<string, string> {
  const keys = ['PatientName', 'PatientID', 'PatientBirthDate', 'PatientSex', 'StudyDate', 'StudyTime', 'StudyID', 'AccessionNumber', 'ReferringPhysicianName', 'PatientPosition'] as const;
  const out: Record<string, string> = {};
  for (const k of keys) out[k] = context?.[k] ?? '';
  if (context?.PatientAge) out.PatientAge = context.PatientAge;
  return out;
}

/** Writes the volume (HU) as a DICOM CT series, one file per axial slice (CT0001.dcm, ...). */
export function writeDicomSeries(x: DicomExport): DicomSeries {
  const v = x.volume;
  if (v.quantity !== 'hu') throw new InputError(`DICOM export: the ${v.format} values are ${v.quantity === 'mu' ? 'mu' : 'of unknown kind'}; give HU (convert with mu_water)`);
  const [lo, hi] = range(v.data);
  const rescale = rescaleFor(lo, hi);
  const warnings: string[] = [];
  if (rescale.slope !== 1) warnings.push(`values from ${lo.toFixed(0)} to ${hi.toFixed(0)} HU exceed 16 bits in whole HU: stored in steps of ${rescale.slope} HU`);
  const random = x.random;
  const now = x.now ?? new Date();
  const ctx = v.dicom;
  const study = ctx?.StudyInstanceUID ?? newUid(random);
  const series = newUid(random);
  const frame = ctx?.FrameOfReferenceUID ?? newUid(random);
  const lps = toLps(v);
  const [dx, dy, dz] = v.spacing;
  const n = v.nx * v.ny;
  // Text in the default repertoire (ASCII; PS3.5 6.1.2.1): "×" as "x", anything else beyond it as "?".
  const ascii = (text: string) => text.replace(/×/g, 'x').replace(/[\\\r\n]+/g, ' ').replace(/[^\x20-\x7e]/g, '?').trim();
  const description = ascii(x.description ?? v.description ?? '') || 'image';
  const derivation = ascii(x.derivation ?? '') || description;
  const common = {
    ImageType: ['DERIVED', 'SECONDARY', 'AXIAL'],
    InstanceCreationDate: dicomDate(now), InstanceCreationTime: dicomTime(now),
    SOPClassUID: CT_IMAGE_STORAGE,
    SeriesDate: dicomDate(now), SeriesTime: dicomTime(now), ContentDate: dicomDate(now), ContentTime: dicomTime(now),
    Modality: 'CT', Manufacturer: 'Rimfill', ManufacturerModelName: 'Rimfill', SoftwareVersions: '0.1.0',
    SeriesDescription: description.slice(0, 64), DerivationDescription: `Rimfill reconstruction: ${derivation}`.slice(0, 1024),
    ...carried(ctx),
    SliceThickness: v.nz > 1 ? ds(dz) : '', KVP: '',
    ...(v.nz > 1 ? { SpacingBetweenSlices: ds(dz) } : {}),
    StudyInstanceUID: study, SeriesInstanceUID: series, SeriesNumber: SERIES_NUMBER, AcquisitionNumber: '',
    ImageOrientationPatient: ['1', '0', '0', '0', '1', '0'],
    FrameOfReferenceUID: frame, PositionReferenceIndicator: '',
    SamplesPerPixel: 1, PhotometricInterpretation: 'MONOCHROME2', Rows: v.ny, Columns: v.nx,
    PixelSpacing: [ds(dy), ds(dx)], // row spacing, then column spacing (PS3.3 10.7.1.3)
    BitsAllocated: 16, BitsStored: 16, HighBit: 15, PixelRepresentation: 1,
    BurnedInAnnotation: 'NO', WindowCenter: '40', WindowWidth: '400',
    RescaleIntercept: ds(rescale.intercept), RescaleSlope: ds(rescale.slope), RescaleType: 'HU', LossyImageCompression: '00',
  };
  const files: NamedBytes[] = [];
  for (let k = 0; k < v.nz; k++) {
    const uid = newUid(random);
    const z = lps.origin[2] + k * dz;
    const pixels = new Int16Array(n);
    for (let i = 0; i < n; i++) pixels[i] = Math.max(-32768, Math.min(32767, Math.round((lps.data[k * n + i] - rescale.intercept) / rescale.slope)));
    const meta = dcmjs.data.DicomMetaDictionary.denaturalizeDataset({
      FileMetaInformationVersion: new Uint8Array([0, 1]).buffer, MediaStorageSOPClassUID: CT_IMAGE_STORAGE, MediaStorageSOPInstanceUID: uid,
      TransferSyntaxUID: EXPLICIT_VR_LITTLE_ENDIAN, ImplementationClassUID: IMPLEMENTATION_CLASS_UID, ImplementationVersionName: 'RIMFILL_0_1',
      _vrMap: { FileMetaInformationVersion: 'OB' },
    });
    const dict = new dcmjs.data.DicomDict(meta);
    dict.dict = dcmjs.data.DicomMetaDictionary.denaturalizeDataset({
      ...common, SOPInstanceUID: uid, InstanceNumber: String(k + 1),
      ImagePositionPatient: [ds(lps.origin[0]), ds(lps.origin[1]), ds(z)], SliceLocation: ds(z),
      PixelData: [pixels.buffer], _vrMap: { PixelData: 'OW' },
    });
    files.push({ name: `CT${String(k + 1).padStart(4, '0')}.dcm`, bytes: new Uint8Array(dict.write()) });
  }
  return { files, rescale, seriesUid: series, warnings };
}
