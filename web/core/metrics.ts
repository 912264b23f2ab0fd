// Image-quality figures: RMSE, PSNR and SSIM, over a whole image or a mask.
import { gridOrigin, type ImageGrid } from './image';

/** Pixels whose centre lies within `radius` mm of the isocentre (1) or not (0). */
export function circleMask(grid: ImageGrid, radius: number): Uint8Array {
  const m = new Uint8Array(grid.nx * grid.ny);
  const { x0, y0 } = gridOrigin(grid);
  for (let j = 0; j < grid.ny; j++) {
    for (let i = 0; i < grid.nx; i++) m[j * grid.nx + i] = Math.hypot(x0 + i * grid.dx, y0 + j * grid.dy) <= radius ? 1 : 0;
  }
  return m;
}

/** Root-mean-square difference over the mask (all pixels when absent); NaN for an empty mask. */
export function rmse(a: Float32Array, b: Float32Array, mask?: Uint8Array): number {
  let s = 0, n = 0;
  for (let i = 0; i < a.length; i++) {
    if (mask && !mask[i]) continue;
    const d = a[i] - b[i];
    s += d * d;
    n++;
  }
  return n ? Math.sqrt(s / n) : NaN;
}

/** PSNR in dB: 10 log10(L^2 / MSE), L the data range (REFERENCES.md [psnr]). */
export function psnr(a: Float32Array, b: Float32Array, dataRange: number, mask?: Uint8Array): number {
  const e = rmse(a, b, mask);
  return 10 * Math.log10((dataRange * dataRange) / (e * e));
}

/** 1D Gaussian taps, sigma 1.5, truncated at 3.5 sigma (11 taps), normalized. */
function gaussianTaps(sigma = 1.5, truncate = 3.5): Float64Array {
  const r = Math.floor(truncate * sigma + 0.5);
  const t = new Float64Array(2 * r + 1);
  let s = 0;
  for (let i = -r; i <= r; i++) s += t[i + r] = Math.exp(-(i * i) / (2 * sigma * sigma));
  return t.map((v) => v / s);
}

/** Separable Gaussian filter with mirror ("reflect", edge sample repeated) boundaries. */
function gaussianFilter(src: Float64Array, nx: number, ny: number, taps: Float64Array): Float64Array {
  const r = (taps.length - 1) / 2;
  const reflect = (i: number, n: number) => {
    while (i < 0 || i >= n) i = i < 0 ? -i - 1 : 2 * n - i - 1;
    return i;
  };
  const tmp = new Float64Array(src.length);
  const out = new Float64Array(src.length);
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      let s = 0;
      for (let k = -r; k <= r; k++) s += taps[k + r] * src[j * nx + reflect(i + k, nx)];
      tmp[j * nx + i] = s;
    }
  }
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      let s = 0;
      for (let k = -r; k <= r; k++) s += taps[k + r] * tmp[reflect(j + k, ny) * nx + i];
      out[j * nx + i] = s;
    }
  }
  return out;
}

/**
 * Mean SSIM (Z. Wang, A. C. Bovik, H. R. Sheikh, E. P. Simoncelli, "Image quality assessment:
 * from error visibility to structural similarity", IEEE TIP 13(4):600-612, 2004): 11-tap
 * Gaussian window, sigma 1.5, population covariance, K1 = 0.01, K2 = 0.03, L = dataRange.
 * Wang et al. define the mean SSIM over the local windows of the image; we take only the windows
 * that lie wholly inside it, so without a mask the mean leaves out a border of half the window
 * (5 pixels) and no padding enters the figure. With a mask it averages the SSIM map over the mask.
 */
export function ssim(a: Float32Array, b: Float32Array, nx: number, ny: number, dataRange: number, mask?: Uint8Array): number {
  const map = ssimMap(a, b, nx, ny, dataRange);
  const pad = ssimBorder();
  let s = 0, count = 0;
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const k = j * nx + i;
      if (mask ? !mask[k] : i < pad || j < pad || i >= nx - pad || j >= ny - pad) continue;
      s += map[k];
      count++;
    }
  }
  return count ? s / count : NaN;
}

/** Pixels at each image border that the unmasked mean leaves out (half the window). */
export function ssimBorder(): number {
  return (gaussianTaps().length - 1) / 2;
}

/** The SSIM map of ssim() (one value per pixel, before averaging). */
export function ssimMap(a: Float32Array, b: Float32Array, nx: number, ny: number, dataRange: number): Float64Array {
  const taps = gaussianTaps();
  const n = nx * ny;
  const x = Float64Array.from(a), y = Float64Array.from(b);
  const xx = new Float64Array(n), yy = new Float64Array(n), xy = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    xx[i] = x[i] * x[i];
    yy[i] = y[i] * y[i];
    xy[i] = x[i] * y[i];
  }
  const [mx, my, mxx, myy, mxy] = [x, y, xx, yy, xy].map((v) => gaussianFilter(v, nx, ny, taps));
  const c1 = (0.01 * dataRange) ** 2, c2 = (0.03 * dataRange) ** 2;
  const out = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const vx = mxx[k] - mx[k] * mx[k], vy = myy[k] - my[k] * my[k], cxy = mxy[k] - mx[k] * my[k];
    out[k] = ((2 * mx[k] * my[k] + c1) * (2 * cxy + c2)) / ((mx[k] ** 2 + my[k] ** 2 + c1) * (vx + vy + c2));
  }
  return out;
}
