// SPDX-License-Identifier: GPL-3.0-or-later
// The curves behind the picture and --curves: per bin of the measuring
// band, and the plain cross-correlation around its peak.
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "measure_internal.h"

#define MAX_LAGS 4001

static double db(double power) {
  return power > 0 ? 10.0 * log10(power) : -300.0;
}

// The plain normalised cross-correlation of the recorded pair (no
// weighting): Re sum_k S(k) exp(2 pi j k n / N) over every bin but DC,
// divided by sqrt(sum |R|^2 sum |X|^2), so a file against itself gives 1
// at lag 0, and an inverted copy -1.
static bool correlation(const VnTotals *t, int64_t lag, uint32_t lobe,
                        int64_t max_lag, VnMeasureCurves *c) {
  const uint32_t n = t->n_fft;
  fftw_complex *spec = fftw_alloc_complex(n), *g = fftw_alloc_complex(n);
  fftw_plan plan = spec && g ? fftw_plan_dft_1d((int)n, spec, g, FFTW_BACKWARD,
                                                FFTW_ESTIMATE)
                             : NULL;
  bool ok = plan != NULL;
  if (ok) {
    memset(spec, 0, n * sizeof *spec);
    double rr = 0, xx = 0;
    for (uint32_t k = 1; k <= n / 2; ++k) {
      spec[k] = t->srx[k];
      rr += t->srr[k];
      xx += t->sxx[k];
    }
    fftw_execute(plan);
    const double norm = rr > 0 && xx > 0 ? 1.0 / sqrt(rr * xx) : 0.0;
    // Enough lags to show the main lobe and its neighbours, a couple of
    // milliseconds at least.
    int64_t span = 4 * (int64_t)lobe;
    span = span > 96 ? span : 96;
    span = span < MAX_LAGS / 2 ? span : MAX_LAGS / 2;
    int64_t first = lag - span, last = lag + span;
    first = first < -max_lag ? -max_lag : first;
    last = last > max_lag ? max_lag : last;
    c->first_lag = first;
    c->n_lags = (uint32_t)(last - first + 1);
    c->correlation = malloc(c->n_lags * sizeof *c->correlation);
    ok = c->correlation != NULL;
    for (uint32_t i = 0; ok && i < c->n_lags; ++i) {
      const int64_t l = first + (int64_t)i;
      const size_t at = l >= 0 ? (size_t)l : (size_t)((int64_t)n + l);
      c->correlation[i] = creal(g[at]) * norm;
    }
  }
  if (plan) {
    fftw_destroy_plan(plan);
  }
  fftw_free(spec);
  fftw_free(g);
  return ok;
}

bool vn_measure_curves(const VnTotals *t1, const VnTotals *t2, VnBins band,
                       const VnCorrection *best, int64_t lag, uint32_t lobe,
                       int64_t max_lag, VnMeasureCurves *c) {
  memset(c, 0, sizeof *c);
  c->n_fft = t1->n_fft;
  c->lo_bin = band.lo;
  c->hi_bin = band.hi;
  const size_t m = band.hi - band.lo + 1;
  double **arrays[] = {&c->coherence,       &c->phase_before_deg,
                       &c->phase_after_deg, &c->sum_before_db,
                       &c->sum_after_db,    &c->ref_db};
  for (size_t i = 0; i < sizeof arrays / sizeof arrays[0]; ++i) {
    *arrays[i] = malloc(m * sizeof **arrays[i]);
    if (!*arrays[i]) {
      return false;
    }
  }
  const double s1 = t1->n_segments ? (double)t1->n_segments : 1.0;
  const double s2 = t2->n_segments ? (double)t2->n_segments : 1.0;
  for (uint32_t k = band.lo; k <= band.hi; ++k) {
    const size_t i = k - band.lo;
    const double den = t2->srr[k] * t2->sxx[k];
    c->coherence[i] =
        den > 0 ? creal(t2->srx[k] * conj(t2->srx[k])) / den : 0.0;
    c->phase_before_deg[i] = carg(t1->srx[k]) * 180.0 / M_PI;
    const double complex after =
        t2->srx[k] * vn_correction_at(best, k, t2->n_fft);
    c->phase_after_deg[i] = carg(after) * 180.0 / M_PI;
    c->sum_before_db[i] =
        db((t1->srr[k] + t1->sxx[k] + 2.0 * creal(t1->srx[k])) / s1);
    c->sum_after_db[i] =
        db((t2->srr[k] + t2->sxx[k] + 2.0 * creal(after)) / s2);
    c->ref_db[i] = db(t1->srr[k] / s1);
  }
  return correlation(t1, lag, lobe, max_lag, c);
}
