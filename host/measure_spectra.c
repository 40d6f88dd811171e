// SPDX-License-Identifier: GPL-3.0-or-later
// Welch-averaged auto- and cross-spectra of REF and TARGET, in double
// precision (FFTW), kept per group of segments.
#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include "measure_internal.h"

// FFTW's planner is not thread-safe, and the plugins plan too.
static pthread_mutex_t plan_lock = PTHREAD_MUTEX_INITIALIZER;

int vn_spectra_init(VnSpectra *s, uint32_t n_fft, uint32_t n_groups) {
  memset(s, 0, sizeof *s);
  s->n_fft = n_fft;
  s->n_bins = n_fft / 2 + 1;
  s->n_groups = n_groups;
  const size_t cells = (size_t)n_groups * s->n_bins;
  s->window = malloc(n_fft * sizeof *s->window);
  s->seg_r = malloc(n_fft * sizeof *s->seg_r);
  s->seg_x = malloc(n_fft * sizeof *s->seg_x);
  s->buf = fftw_alloc_real(n_fft);
  s->fr = fftw_alloc_complex(s->n_bins);
  s->fx = fftw_alloc_complex(s->n_bins);
  s->srr = calloc(cells, sizeof *s->srr);
  s->sxx = calloc(cells, sizeof *s->sxx);
  s->srx = calloc(cells, sizeof *s->srx);
  s->group_segments = calloc(n_groups, sizeof *s->group_segments);
  if (!s->window || !s->seg_r || !s->seg_x || !s->buf || !s->fr || !s->fx ||
      !s->srr || !s->sxx || !s->srx || !s->group_segments) {
    return -1;
  }
  // Periodic Hann (scipy.signal.get_window('hann') is the same): at 50%
  // overlap its shifted copies sum to a constant, so every frame counts
  // alike in the average.
  for (uint32_t i = 0; i < n_fft; ++i) {
    s->window[i] = 0.5 - 0.5 * cos(2.0 * M_PI * i / n_fft);
  }
  pthread_mutex_lock(&plan_lock);
  s->plan = fftw_plan_dft_r2c_1d((int)n_fft, s->buf, s->fr, FFTW_ESTIMATE);
  pthread_mutex_unlock(&plan_lock);
  return s->plan ? 0 : -1;
}

void vn_spectra_free(VnSpectra *s) {
  if (s->plan) {
    pthread_mutex_lock(&plan_lock);
    fftw_destroy_plan(s->plan);
    pthread_mutex_unlock(&plan_lock);
  }
  free(s->window);
  free(s->seg_r);
  free(s->seg_x);
  fftw_free(s->buf);
  fftw_free(s->fr);
  fftw_free(s->fx);
  free(s->srr);
  free(s->sxx);
  free(s->srx);
  free(s->group_segments);
  memset(s, 0, sizeof *s);
}

static void transform(VnSpectra *s, const double *seg, double complex *out) {
  for (uint32_t i = 0; i < s->n_fft; ++i) {
    s->buf[i] = seg[i] * s->window[i];
  }
  fftw_execute_dft_r2c(s->plan, s->buf, out);
}

void vn_spectra_add(VnSpectra *s, uint32_t group) {
  transform(s, s->seg_r, s->fr);
  transform(s, s->seg_x, s->fx);
  const size_t at = (size_t)group * s->n_bins;
  double *restrict srr = s->srr + at, *restrict sxx = s->sxx + at;
  double complex *restrict srx = s->srx + at;
  const double complex *restrict fr = s->fr, *restrict fx = s->fx;
  for (uint32_t k = 0; k < s->n_bins; ++k) {
    const double rr = creal(fr[k]), ri = cimag(fr[k]);
    const double xr = creal(fx[k]), xi = cimag(fx[k]);
    srr[k] += rr * rr + ri * ri;
    sxx[k] += xr * xr + xi * xi;
    // conj(R) X, written out: the complex multiply without the NaN and
    // infinity checks a C99 complex multiply carries.
    srx[k] += CMPLX(rr * xr + ri * xi, rr * xi - ri * xr);
  }
  ++s->group_segments[group];
  ++s->n_segments;
}

bool vn_totals_init(VnTotals *t, uint32_t n_fft) {
  memset(t, 0, sizeof *t);
  t->n_fft = n_fft;
  t->n_bins = n_fft / 2 + 1;
  t->srr = calloc(t->n_bins, sizeof *t->srr);
  t->sxx = calloc(t->n_bins, sizeof *t->sxx);
  t->srx = calloc(t->n_bins, sizeof *t->srx);
  return t->srr && t->sxx && t->srx;
}

void vn_totals_sum(VnTotals *t, const VnSpectra *s, int skip) {
  memset(t->srr, 0, t->n_bins * sizeof *t->srr);
  memset(t->sxx, 0, t->n_bins * sizeof *t->sxx);
  memset(t->srx, 0, t->n_bins * sizeof *t->srx);
  t->n_segments = 0;
  for (uint32_t g = 0; g < s->n_groups; ++g) {
    if ((int)g == skip) {
      continue;
    }
    const size_t at = (size_t)g * s->n_bins;
    for (uint32_t k = 0; k < t->n_bins; ++k) {
      t->srr[k] += s->srr[at + k];
      t->sxx[k] += s->sxx[at + k];
      t->srx[k] += s->srx[at + k];
    }
    t->n_segments += s->group_segments[g];
  }
}

void vn_totals_free(VnTotals *t) {
  free(t->srr);
  free(t->sxx);
  free(t->srx);
  memset(t, 0, sizeof *t);
}
