// Reference tier: Rimfill's DICOM CT export read by pydicom (Debian python3-pydicom), an
// independent reader, with its validation raising on any value that breaks its value
// representation (DS longer than 16 characters, malformed UIDs, odd lengths): the values
// (stored x RescaleSlope + RescaleIntercept, PS3.3 C.11.1.1.2) equal the HU to within half the
// rescale step, and the geometry (Image Position / Orientation (Patient), Pixel Spacing, PS3.3
// C.7.6.2) places each pixel where Rimfill's frame says, in LPS.
import { describe, expect, it } from 'vitest';
import { writeDicomSeries } from '../../web/core/formats/dicom-write';
import type { ImageVolume } from '../../web/core/formats/volume';
import { runPython } from '../helpers/python';

function volume(): ImageVolume {
  const [nx, ny, nz] = [7, 5, 3];
  const data = Float32Array.from({ length: nx * ny * nz }, (_, i) => -1000 + ((i * 37.3) % 2100));
  return { nx, ny, nz, spacing: [0.75, 0.6, 2], origin: [-20.5, -3, 7], data, quantity: 'hu', format: 'NRRD' };
}

describe('DICOM CT export read by pydicom', () => {
  it('values, geometry and the CT Image attributes', () => {
    const v = volume();
    const out = writeDicomSeries({ volume: v, description: 'FBP, ramp, knowledge: outline' });
    const input: Record<string, Uint8Array> = { 'hu.f32': new Uint8Array(v.data.buffer) };
    for (const f of out.files) input[f.name] = f.bytes;
    const py = runPython(`
import glob, json, numpy as np, pydicom, pydicom.config
pydicom.config.settings.reading_validation_mode = pydicom.config.RAISE
hu = np.fromfile('hu.f32', dtype='<f4').reshape(3, 5, 7)
rows = []
for name in sorted(glob.glob('CT*.dcm')):
    d = pydicom.dcmread(name)
    d.ensure_file_meta()
    values = d.pixel_array.astype(np.float64) * float(d.RescaleSlope) + float(d.RescaleIntercept)
    ipp = [float(x) for x in d.ImagePositionPatient]
    iop = [float(x) for x in d.ImageOrientationPatient]
    dr, dc = (float(x) for x in d.PixelSpacing)
    # Rimfill's voxel (i, j, k) lies at LPS (x, -y, z): stored row r holds j = ny - 1 - r.
    k = int(round((ipp[2] - 7) / 2))  # slice k at z0 + k dz
    expected = hu[k, ::-1, :]
    # LPS of stored pixel (r, c) = IPP + c dc rowdir + r dr coldir; Rimfill y = -LPS y.
    centre_y = -(ipp[1] + 2 * dr * iop[4])
    rows.append(dict(name=name, maxDiff=float(np.abs(values - expected).max()), ipp=ipp, iop=iop, spacing=[dr, dc],
        x0=ipp[0], yCentreRow2=centre_y, sop=d.SOPClassUID, ts=str(d.file_meta.TransferSyntaxUID), modality=d.Modality,
        imageType=list(d.ImageType), description=d.SeriesDescription, photometric=d.PhotometricInterpretation,
        bits=[d.BitsAllocated, d.BitsStored, d.HighBit, d.PixelRepresentation], series=d.SeriesInstanceUID,
        instance=int(d.InstanceNumber), slope=float(d.RescaleSlope), rescaleType=d.RescaleType, patientName=str(d.PatientName)))
print(json.dumps(rows))
`, ['pydicom', 'numpy'], input);
    const rows = JSON.parse(py.stdout) as Array<Record<string, unknown>>;
    expect(rows).toHaveLength(3);
    rows.forEach((r, k) => {
      expect(r.maxDiff as number).toBeLessThanOrEqual((r.slope as number) / 2 + 1e-4);
      expect(r.sop).toBe('1.2.840.10008.5.1.4.1.1.2');
      expect(r.ts).toBe('1.2.840.10008.1.2.1');
      expect(r.modality).toBe('CT');
      expect(r.imageType).toEqual(['DERIVED', 'SECONDARY', 'AXIAL']);
      expect(r.description).toBe('FBP, ramp, knowledge: outline');
      expect(r.photometric).toBe('MONOCHROME2');
      expect(r.bits).toEqual([16, 16, 15, 1]);
      expect(r.rescaleType).toBe('HU');
      expect(r.patientName).toBe('');
      expect(r.series).toBe(out.seriesUid);
      expect(r.instance).toBe(k + 1);
      expect(r.iop).toEqual([1, 0, 0, 0, 1, 0]);
      expect(r.spacing).toEqual([0.6, 0.75]);
      expect(r.x0).toBeCloseTo(-20.5, 6); // the centre of voxel (0, 0, k): the volume's origin
      // Stored row 2 is Rimfill row j = 5 - 1 - 2 = 2: y = y0 + 2 dy.
      expect(r.yCentreRow2).toBeCloseTo(-3 + 2 * 0.6, 6);
      expect((r.ipp as number[])[2]).toBeCloseTo(7 + 2 * k, 6);
    });
  });
});
