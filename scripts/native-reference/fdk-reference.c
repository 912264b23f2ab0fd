/*
 * A straightforward native FDK, the yardstick `rimfill bench` measures the engine against.
 *
 * Written the way a careful C programmer would write it first: FFTW for the row filter, OpenMP
 * over z slices for the backprojection, everything in float, no hand vectorization (the
 * compiler's -O3 -march=native does what it can). It does the same job as the engine's FDK
 * (web/core/recon/fdk.ts) on a circular full-turn scan with a flat detector:
 *
 *   1. pre-weight every sample by  dbeta * 1/2 * D / sqrt(D^2 + u^2 + v^2)
 *      (angular step x full-turn redundancy x the FDK cosine weight; Feldkamp, Davis & Kress,
 *      J. Opt. Soc. Am. A 1(6):612-619, 1984),
 *   2. filter every detector row with Kak & Slaney's spatial-domain ramp (Principles of
 *      Computerized Tomographic Imaging, 1988, ch. 3 eq. 61) of spacing tau = pitch_u R / D,
 *      times tau, zero-padded to the next power of two >= 2 n - 1 (a linear convolution),
 *   3. backproject voxel by voxel with bilinear interpolation on the detector (cells outside it
 *      read as zero) and the distance weight (R / l)^2, l the voxel's distance from the source
 *      along the central ray.
 *
 * Geometry (Rimfill's design notes): source at (R cos b, R sin b, 0), detector centre at
 * -(D - R)(cos b, sin b, 0), u along (-sin b, cos b, 0), v along +z; channel k at
 * u = (k - (n - 1)/2) pitch_u + offset_u, likewise rows. Voxel (i, j, k) at
 * x = (i - (nx - 1)/2) dx + cx, likewise y and z; the volume is written x fastest.
 *
 * Usage:
 *   fdk-reference <projections file> <byte offset> <channels> <rows> <views> <pitch_u> <pitch_v>
 *       <offset_u> <offset_v> <R> <D> <start deg> <step deg> <nx> <ny> <nz> <dx> <dy> <dz>
 *       <cx> <cy> <cz> <volume out>
 * The projections are float32 little-endian, [view][row][channel], starting at <byte offset>
 * (so the data of an uncompressed NRRD scan file can be read in place). The volume is written
 * as raw float32. Threads: OMP_NUM_THREADS.
 */
#include <fftw3.h>
#include <math.h>
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static void die(const char *what) {
  fprintf(stderr, "fdk-reference: %s\n", what);
  exit(2);
}

/* x clamped to [lo, hi]. */
static inline float clampf(float x, float lo, float hi) {
  x = x > lo ? x : lo;
  return x < hi ? x : hi;
}

/* What the backprojection needs of one view. */
struct view_geometry {
  float cb, sb;        /* cos and sin of the source angle */
  float R, D;          /* source to isocentre, source to detector, mm */
  float iu, iv;        /* 1 / pitch_u, 1 / pitch_v */
  float su, sv;        /* padded cell coordinate of u = 0, v = 0 */
  float topu, topv;    /* largest padded cell coordinates (zero border) */
  int pw;              /* padded row length */
};

/* Adds view g's filtered, padded projection p into one row of voxels (y, z), x from x0 in steps dx. */
static void backproject_row(float *restrict dst, const float *restrict p, const struct view_geometry *restrict g,
                            int nx, float x0, float dx, float y, float z) {
  for (int i = 0; i < nx; i++) {
    float x = x0 + (float)i * dx;
    float l = g->R - (x * g->cb + y * g->sb); /* (p - S).n */
    float mag = g->D / l;
    float fu = clampf((-x * g->sb + y * g->cb) * mag * g->iu + g->su, 0.0f, g->topu);
    float fv = clampf(z * mag * g->iv + g->sv, 0.0f, g->topv);
    int a = (int)fu, c = (int)fv;
    float wu = fu - (float)a, wv = fv - (float)c;
    int q = c * g->pw + a;
    float top = p[q] + wu * (p[q + 1] - p[q]);
    float bottom = p[q + g->pw] + wu * (p[q + g->pw + 1] - p[q + g->pw]);
    float w = g->R / l;
    dst[i] += (top + wv * (bottom - top)) * w * w;
  }
}

static size_t next_pow2(size_t n) {
  size_t p = 4;
  while (p < 2 * n - 1) p <<= 1;
  return p;
}

int main(int argc, char **argv) {
  if (argc != 24) die("expected 23 arguments (see the comment at the top of the source)");
  const char *in_path = argv[1];
  long offset = atol(argv[2]);
  int nch = atoi(argv[3]), nrows = atoi(argv[4]), nviews = atoi(argv[5]);
  double pitch_u = atof(argv[6]), pitch_v = atof(argv[7]), off_u = atof(argv[8]), off_v = atof(argv[9]);
  double R = atof(argv[10]), D = atof(argv[11]), start = atof(argv[12]), step = atof(argv[13]);
  int nx = atoi(argv[14]), ny = atoi(argv[15]), nz = atoi(argv[16]);
  double dx = atof(argv[17]), dy = atof(argv[18]), dz = atof(argv[19]);
  double cx = atof(argv[20]), cy = atof(argv[21]), cz = atof(argv[22]);
  const char *out_path = argv[23];

  /* Read the projections. */
  size_t frame = (size_t)nch * nrows, total = frame * nviews;
  float *proj = malloc(total * sizeof(float));
  if (!proj) die("out of memory for the projections");
  FILE *f = fopen(in_path, "rb");
  if (!f) die("cannot open the projections file");
  if (fseek(f, offset, SEEK_SET) != 0 || fread(proj, sizeof(float), total, f) != total) die("the projections file is too short");
  fclose(f);

  /* 1. Pre-weights. */
  double u0 = -(nch - 1) / 2.0 * pitch_u + off_u, v0 = -(nrows - 1) / 2.0 * pitch_v + off_v;
  double dbeta = fabs(step) * M_PI / 180.0;
#pragma omp parallel for schedule(static)
  for (int v = 0; v < nviews; v++) {
    for (int r = 0; r < nrows; r++) {
      double vr = v0 + r * pitch_v;
      float *row = proj + (size_t)v * frame + (size_t)r * nch;
      for (int k = 0; k < nch; k++) {
        double u = u0 + k * pitch_u;
        row[k] *= (float)(dbeta * 0.5 * D / sqrt(D * D + u * u + vr * vr));
      }
    }
  }

  /* 2. Ramp filter: the kernel's spectrum once, then every row through FFTW. */
  size_t npad = next_pow2(nch), nfreq = npad / 2 + 1;
  double tau = pitch_u * R / D;
  float *kernel = fftwf_malloc(npad * sizeof(float));
  fftwf_complex *kspec = fftwf_malloc(nfreq * sizeof(fftwf_complex));
  memset(kernel, 0, npad * sizeof(float));
  kernel[0] = (float)(1.0 / (4.0 * tau));
  for (size_t n = 1; n <= npad / 2; n += 2) {
    float h = (float)(-1.0 / ((double)n * n * M_PI * M_PI * tau));
    kernel[n] = h;
    kernel[npad - n] = h;
  }
  fftwf_plan kplan = fftwf_plan_dft_r2c_1d((int)npad, kernel, kspec, FFTW_ESTIMATE);
  fftwf_execute(kplan);
  fftwf_destroy_plan(kplan);
  float *response = malloc(nfreq * sizeof(float));
  for (size_t q = 0; q < nfreq; q++) response[q] = kspec[q][0] / (float)npad; /* real: the kernel is even */

  float *buf0 = fftwf_malloc(npad * sizeof(float));
  fftwf_complex *spec0 = fftwf_malloc(nfreq * sizeof(fftwf_complex));
  fftwf_plan fwd = fftwf_plan_dft_r2c_1d((int)npad, buf0, spec0, FFTW_MEASURE);
  fftwf_plan inv = fftwf_plan_dft_c2r_1d((int)npad, spec0, buf0, FFTW_MEASURE);
  size_t rows_total = (size_t)nviews * nrows;
#pragma omp parallel
  {
    float *buf = fftwf_malloc(npad * sizeof(float));
    fftwf_complex *spec = fftwf_malloc(nfreq * sizeof(fftwf_complex));
#pragma omp for schedule(static)
    for (size_t r = 0; r < rows_total; r++) {
      float *row = proj + r * nch;
      memcpy(buf, row, nch * sizeof(float));
      memset(buf + nch, 0, (npad - nch) * sizeof(float));
      fftwf_execute_dft_r2c(fwd, buf, spec);
      for (size_t q = 0; q < nfreq; q++) {
        spec[q][0] *= response[q];
        spec[q][1] *= response[q];
      }
      fftwf_execute_dft_c2r(inv, spec, buf);
      memcpy(row, buf, nch * sizeof(float));
    }
    fftwf_free(buf);
    fftwf_free(spec);
  }

  /* 3. Backprojection. Each filtered view gets a zero border (one cell before, two after, in
     both directions) and coordinates are clamped onto it, so voxels whose ray misses the
     detector read zeros and the loop has no branch (which lets the compiler vectorize it). */
  int pw = nch + 3, ph = nrows + 3;
  float *padded = calloc((size_t)pw * ph * nviews, sizeof(float));
  if (!padded) die("out of memory for the filtered projections");
  for (int v = 0; v < nviews; v++)
    for (int r = 0; r < nrows; r++)
      memcpy(padded + ((size_t)v * ph + r + 1) * pw + 1, proj + (size_t)v * frame + (size_t)r * nch, nch * sizeof(float));
  free(proj);
  float *vol = calloc((size_t)nx * ny * nz, sizeof(float));
  if (!vol) die("out of memory for the volume");
  double x0 = cx - (nx - 1) / 2.0 * dx, y0 = cy - (ny - 1) / 2.0 * dy, z0 = cz - (nz - 1) / 2.0 * dz;
  for (int v = 0; v < nviews; v++) {
    double b = (start + v * step) * M_PI / 180.0;
    struct view_geometry g = {
      (float)cos(b), (float)sin(b), (float)R, (float)D, 1.0f / (float)pitch_u, 1.0f / (float)pitch_v,
      (float)(1.0 - u0 / pitch_u), (float)(1.0 - v0 / pitch_v), (float)(nch + 1), (float)(nrows + 1), pw,
    };
    const float *p = padded + (size_t)v * pw * ph;
#pragma omp parallel for schedule(static)
    for (int k = 0; k < nz; k++)
      for (int j = 0; j < ny; j++)
        backproject_row(vol + ((size_t)k * ny + j) * nx, p, &g, nx, (float)x0, (float)dx, (float)(y0 + j * dy), (float)(z0 + k * dz));
  }

  FILE *o = fopen(out_path, "wb");
  if (!o) die("cannot write the volume");
  if (fwrite(vol, sizeof(float), (size_t)nx * ny * nz, o) != (size_t)nx * ny * nz) die("short write of the volume");
  fclose(o);
  fftwf_destroy_plan(fwd);
  fftwf_destroy_plan(inv);
  return 0;
}
