"""DICOM reference files for the readers' tests, written or decoded by pydicom.

Writes into <output folder>:
- pydicom's own test files (copied as they are): CT_small.dcm (a CT slice, 128 x 128),
  JPEG2000.dcm (a compressed transfer syntax), MR_small.dcm (an MR image), MR_truncated.dcm
  (a damaged file);
- ct-small-hu.f32: CT_small.dcm's pixels as pydicom decodes them, after the modality rescale
  (HU = stored * RescaleSlope + RescaleIntercept, DICOM PS3.3 C.11.1.1.2), rows reversed into
  Rimfill's image frame (y anterior), little-endian float32;
- shuffled-series/: four slices of 5 x 6 pixels in shuffled order, one big-endian, rows along
  -x, 12 bits stored, slope 2 and intercept -1000; shuffled-series.f32 is the volume they hold,
  in Rimfill's frame, sorted by position;
- phantom-series/: twelve axial slices of 24 x 20 pixels (2 mm, 2.5 mm apart, stored = HU +
  1024): air with a water ball and a bone block; phantom-series.f32 is the HU volume.

UIDs are derived from fixed strings so that a second run writes the same bytes.

Usage: python3 scripts/reference/dicom_files.py <output folder>
"""
import os
import shutil
import sys

import numpy as np
import pydicom
from pydicom.dataset import FileDataset, FileMetaDataset
from pydicom.uid import ExplicitVRBigEndian, ExplicitVRLittleEndian, generate_uid

PYDICOM_FILES = os.path.join(os.path.dirname(pydicom.__file__), "data", "test_files")
CT_IMAGE = "1.2.840.10008.5.1.4.1.1.2"


def uid(*parts):
    return generate_uid(entropy_srcs=["rimfill-fixture", *parts])


def ct_slice(path, rows, cols, stored, *, series, instance, spacing, orientation, position, slope, intercept, bits_stored, big_endian=False):
    meta = FileMetaDataset()
    meta.MediaStorageSOPClassUID = CT_IMAGE
    meta.MediaStorageSOPInstanceUID = uid(series, str(instance))
    meta.TransferSyntaxUID = ExplicitVRBigEndian if big_endian else ExplicitVRLittleEndian
    ds = FileDataset(os.path.basename(path), {}, file_meta=meta, preamble=b"\0" * 128)
    ds.is_little_endian = not big_endian
    ds.is_implicit_VR = False
    ds.Modality = "CT"
    ds.SOPClassUID = CT_IMAGE
    ds.SOPInstanceUID = meta.MediaStorageSOPInstanceUID
    ds.SeriesInstanceUID = uid(series)
    ds.Rows, ds.Columns = rows, cols
    ds.PixelSpacing = spacing
    ds.ImageOrientationPatient = orientation
    ds.ImagePositionPatient = position
    ds.SamplesPerPixel = 1
    ds.PhotometricInterpretation = "MONOCHROME2"
    ds.BitsAllocated = 16
    ds.BitsStored = bits_stored
    ds.HighBit = bits_stored - 1
    ds.PixelRepresentation = 0
    ds.RescaleSlope = slope
    ds.RescaleIntercept = intercept
    ds.InstanceNumber = instance
    ds.PixelData = stored.byteswap().tobytes() if big_endian else stored.tobytes()
    ds.save_as(path, write_like_original=False)


def pydicom_test_files(out):
    for name in ("CT_small.dcm", "JPEG2000.dcm", "MR_small.dcm", "MR_truncated.dcm"):
        shutil.copyfile(os.path.join(PYDICOM_FILES, name), os.path.join(out, name))
    d = pydicom.dcmread(os.path.join(PYDICOM_FILES, "CT_small.dcm"))
    hu = d.pixel_array.astype(np.float32) * float(d.RescaleSlope) + float(d.RescaleIntercept)
    hu[::-1, :].astype("<f4").tofile(os.path.join(out, "ct-small-hu.f32"))


def shuffled_series(out):
    folder = os.path.join(out, "shuffled-series")
    os.makedirs(folder, exist_ok=True)
    rng = np.random.default_rng(3)
    vol = []
    for k, z in enumerate([12.5, 10.0, 15.0, 7.5]):
        stored = rng.integers(0, 3000, size=(5, 6)).astype(np.uint16)
        ct_slice(os.path.join(folder, "s%d.dcm" % k), 5, 6, stored, series="shuffled", instance=k + 1,
                 spacing=[0.7, 0.5], orientation=[-1, 0, 0, 0, 1, 0], position=[20.0, -3.0, z],
                 slope=2, intercept=-1000, bits_stored=12, big_endian=(k == 1))
        hu = (stored.astype(np.float32) % 4096) * 2 - 1000
        vol.append((z, hu[::-1, ::-1]))  # rows along -x: columns reversed; Rimfill y = -patient y: rows reversed
    vol.sort(key=lambda t: t[0])
    np.stack([h for _, h in vol]).astype("<f4").tofile(os.path.join(out, "shuffled-series.f32"))


def phantom_series(out):
    folder = os.path.join(out, "phantom-series")
    os.makedirs(folder, exist_ok=True)
    x = (np.arange(24) - 11.5) * 2.0
    y = (np.arange(20) - 9.5) * 2.0
    X, Y = np.meshgrid(x, y)
    ref = []
    for k in range(12):
        z = -13.75 + 2.5 * k
        hu = np.full((20, 24), -1000.0)
        hu[X**2 + Y**2 + z**2 < 14.0**2] = 0.0
        hu[(np.abs(X - 10) < 5) & (np.abs(Y + 6) < 3) & (np.abs(z) < 6)] = 1000.0
        ct_slice(os.path.join(folder, "ct%02d.dcm" % k), 20, 24, (hu + 1024).astype(np.uint16), series="phantom", instance=k + 1,
                 spacing=[2.0, 2.0], orientation=[1, 0, 0, 0, 1, 0], position=[float(x[0]), float(-y[-1]), z],
                 slope=1, intercept=-1024, bits_stored=16)
        ref.append(hu[::-1, :])
    np.stack(ref).astype("<f4").tofile(os.path.join(out, "phantom-series.f32"))


def main(out):
    os.makedirs(out, exist_ok=True)
    pydicom_test_files(out)
    shuffled_series(out)
    phantom_series(out)


if __name__ == "__main__":
    if len(sys.argv) != 2:
        raise SystemExit(__doc__)
    main(sys.argv[1])
