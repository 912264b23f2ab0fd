"""Reference values of image-quality figures from scikit-image: SSIM (Wang et al. 2004) with the
paper's settings (gaussian_weights=True, sigma=1.5, use_sample_covariance=False), RMSE by numpy
and PSNR by skimage.metrics.peak_signal_noise_ratio, on test images made here with numpy.

Writes into <output folder>:
- ssim/a.f32, ssim/b-<case>.f32: 67 x 53 images (x fastest; smooth structure, a disk and
  seeded uniform noise), ssim/mask.u8: a disk; ssim/expected.json: per case the data range,
  skimage's mean SSIM and the mean of its SSIM map over the mask;
- volume/a.f32, volume/b.f32: 30 x 26 x 5 mu-like volumes; volume/expected.json: SSIM per
  axial slice (data range of the reference b), RMSE and PSNR over the voxels.

Usage: python3 scripts/reference/metric_values.py <output folder>
"""
import json
import os
import sys

import numpy as np
from skimage.metrics import peak_signal_noise_ratio, structural_similarity

PAPER = {"gaussian_weights": True, "sigma": 1.5, "use_sample_covariance": False}
NX, NY = 67, 53
CASES = [("seed5", 5, 20, 200), ("seed6", 6, 120, 250), ("seed7", 7, 300, 80)]


def image(seed, noise):
    j, i = np.mgrid[0:NY, 0:NX].astype(np.float64)
    rng = np.random.default_rng(seed)
    disk = (np.hypot(i - 30, j - 25) < 12).astype(np.float64)
    return (100 * np.sin(i / 7) * np.cos(j / 5) + 40 * disk + noise * (rng.random((NY, NX)) - 0.5)).astype(np.float32)


def ssim_cases(out):
    folder = os.path.join(out, "ssim")
    os.makedirs(folder, exist_ok=True)
    a = image(1, 10)
    a.astype("<f4").tofile(os.path.join(folder, "a.f32"))
    j, i = np.mgrid[0:NY, 0:NX]
    mask = np.hypot(i - 33, j - 26) < 20
    mask.astype(np.uint8).tofile(os.path.join(folder, "mask.u8"))
    cases = []
    for name, seed, noise, data_range in CASES:
        b = image(seed, noise)
        b.astype("<f4").tofile(os.path.join(folder, "b-%s.f32" % name))
        mssim, full = structural_similarity(a.astype(np.float64), b.astype(np.float64), data_range=data_range, full=True, **PAPER)
        cases.append({"case": name, "width": NX, "height": NY, "dataRange": data_range, "mssim": float(mssim), "masked": float(full[mask].mean())})
    with open(os.path.join(folder, "expected.json"), "w") as f:
        json.dump(cases, f, indent=1)
        f.write("\n")


def volume_case(out):
    folder = os.path.join(out, "volume")
    os.makedirs(folder, exist_ok=True)
    nx, ny, nz = 30, 26, 5
    k, j, i = np.mgrid[0:nz, 0:ny, 0:nx].astype(np.float64)

    def vol(seed, noise):
        rng = np.random.default_rng(seed)
        return (0.02 + 0.01 * np.sin(i / 4 + k) * np.cos(j / 3) + noise * (rng.random((nz, ny, nx)) - 0.5)).astype(np.float32)

    a, b = vol(1, 0.004), vol(2, 0.001)
    a.astype("<f4").tofile(os.path.join(folder, "a.f32"))
    b.astype("<f4").tofile(os.path.join(folder, "b.f32"))
    a64, b64 = a.astype(np.float64), b.astype(np.float64)
    rng = float(b64.max() - b64.min())
    ssim = [float(structural_similarity(a64[s], b64[s], data_range=rng, **PAPER)) for s in range(nz)]
    expected = {
        "size": [nx, ny, nz], "dataRange": rng, "ssim": ssim,
        "rmse": float(np.sqrt(((a64 - b64) ** 2).mean())),
        "psnr": float(peak_signal_noise_ratio(b64, a64, data_range=rng)),
    }
    with open(os.path.join(folder, "expected.json"), "w") as f:
        json.dump(expected, f, indent=1)
        f.write("\n")


def main(out):
    os.makedirs(out, exist_ok=True)
    ssim_cases(out)
    volume_case(out)


if __name__ == "__main__":
    if len(sys.argv) != 2:
        raise SystemExit(__doc__)
    main(sys.argv[1])
