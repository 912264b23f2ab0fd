"""A DICOM CT slice and the same slice as NRRD files in named patient frames.

pydicom decodes pydicom's test file CT_small.dcm (a CT slice, 128 x 128, MIT licence, from
Debian's python3-pydicom) to HU by its rescale (HU = stored x RescaleSlope + RescaleIntercept,
DICOM PS3.3 C.11.1.1.2), and this script writes the HU, rows in the DICOM's own order, as NRRD
files whose header places them in the patient frame. Debian's Python carries no NRRD library,
so the headers are written here in plain Python following the NRRD format specification
(Teem, "Definition of NRRD File Format", section 4 "Space and orientation information"):
"space" names the frame, "space directions" gives one vector per axis (mm), "space origin"
the centre of the first sample.

DICOM's patient frame is left-posterior-superior (PS3.3 C.7.6.2.1.1): the first pixel sits at
Image Position (Patient); along a row the position moves by column spacing x the row direction
cosines, down a column by row spacing x the column direction cosines.

Writes into the output folder:
  ct-small.dcm          the DICOM file, copied byte for byte
  ct-small-lps.nrrd     2D, space left-posterior-superior (the DICOM's own coordinates)
  ct-small-ras.nrrd     2D, space right-anterior-superior (x and y negated)
  ct-small-lps-3d.nrrd  3D with one slice, space left-posterior-superior, slice direction +z

Usage: python3 scripts/reference/dicom_frames.py <output folder>
"""
import os
import shutil
import sys

import numpy as np
import pydicom

SOURCE = os.path.join(os.path.dirname(pydicom.__file__), "data", "test_files", "CT_small.dcm")


def vec(v):
    return "(" + ",".join(repr(float(x)) for x in v) + ")"


def write_nrrd(path, hu, space, directions, origin, note):
    """A NRRD with an attached header: int16 HU, raw little-endian, sizes fastest axis first."""
    sizes = list(hu.shape[::-1])  # numpy (rows, columns[, ...]) -> NRRD (columns, rows, ...)
    header = "".join(
        [
            "NRRD0004\n",
            "# %s\n" % note,
            "type: int16\n",
            "dimension: %d\n" % len(sizes),
            "space: %s\n" % space,
            "sizes: %s\n" % " ".join(str(s) for s in sizes),
            "space directions: %s\n" % " ".join(vec(d) for d in directions),
            "kinds: %s\n" % " ".join(["domain"] * len(sizes)),
            "endian: little\n",
            "encoding: raw\n",
            "space units: %s\n" % " ".join(['"mm"'] * 3),
            "space origin: %s\n" % vec(origin),
            "rimfill.quantity:=hu\n",
            "\n",
        ]
    )
    with open(path, "wb") as f:
        f.write(header.encode("ascii") + hu.astype("<i2").tobytes())


def main(out):
    os.makedirs(out, exist_ok=True)
    shutil.copyfile(SOURCE, os.path.join(out, "ct-small.dcm"))
    ds = pydicom.dcmread(SOURCE)
    hu = ds.pixel_array.astype(np.float64) * float(ds.RescaleSlope) + float(ds.RescaleIntercept)
    if not np.array_equal(hu, np.rint(hu)):
        raise SystemExit("expected whole HU (int16 output)")
    hu = hu.astype(np.int16)
    orient = np.array([float(v) for v in ds.ImageOrientationPatient])
    row_dir, col_dir = orient[:3], orient[3:]
    row_spacing, col_spacing = (float(v) for v in ds.PixelSpacing)  # PS3.3 10.7.1.3: row spacing first
    origin = np.array([float(v) for v in ds.ImagePositionPatient])
    along_row = row_dir * col_spacing  # from one column to the next
    down_column = col_dir * row_spacing  # from one row to the next
    note = "pydicom %s decode of CT_small.dcm, header written by scripts/reference/dicom_frames.py" % pydicom.__version__
    write_nrrd(os.path.join(out, "ct-small-lps.nrrd"), hu, "left-posterior-superior", [along_row, down_column], origin, note)
    ras = np.array([-1.0, -1.0, 1.0])
    write_nrrd(os.path.join(out, "ct-small-ras.nrrd"), hu, "right-anterior-superior", [along_row * ras, down_column * ras], origin * ras, note)
    normal = np.cross(row_dir, col_dir) * float(ds.SliceThickness)
    write_nrrd(os.path.join(out, "ct-small-lps-3d.nrrd"), hu[np.newaxis], "left-posterior-superior", [along_row, down_column, normal], origin, note)


if __name__ == "__main__":
    if len(sys.argv) != 2:
        raise SystemExit(__doc__)
    main(sys.argv[1])
