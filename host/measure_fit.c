// SPDX-License-Identifier: GPL-3.0-or-later
// From Welch totals to an offset, an angle and the sum's figures.
//
// Weighting. The generalized cross-correlation (Knapp and Carter, "The
// generalized correlation method for estimation of time delay", IEEE
// Trans. ASSP 24(4), 1976) weights the cross-spectrum S(k) before the
// inverse transform. We use their maximum-likelihood weighting,
//   psi(k) = g2(k) / ((1 - g2(k)) |S(k)|),
// g2 the magnitude-squared coherence (Carter, Knapp and Nuttall, IEEE
// Trans. Audio Electroacoustics 21(4), 1973). Like PHAT it whitens (the
// 1/|S|), so a bass line's strong low harmonics do not make the peak broad;
// unlike PHAT it gives a bin the weight of its signal-to-noise ratio, and a
// bass DI and an amp mic share little above the cabinet's roll-off: PHAT
// would give those noisy bins as much say as the coherent ones. g2 / (1 -
// g2) is the inverse of the variance of the cross-spectrum's phase, so
// this is also the minimum-variance weighting for the fine fit below.
//
// The fraction. With whole frames taken out, the weighted cross-spectrum
// W(k) = psi(k) S(k) has the phase -2 pi k d / N + theta for a residual d,
// and J(d) = |sum_k W(k) exp(+2 pi j k d / N)| is largest at d: the
// envelope of the correlation, evaluated between the frames by its own
// Fourier sum (band-limited interpolation, exact for the band-limited
// correlation, so without the bias a parabola through three frames has).
//
// The angle. theta = atan2(<r, H{x}>, <r, x>) at that offset (H the Hilbert
// transform, <,> the inner product over the band). Why this is the Phase
// Rotator's angle: the rotator makes y = cos(t) x - sin(t) H{x}; for x =
// rotate(r, t) = cos(t) r - sin(t) H{r}, and since <r, H{r}> = 0 and
// H{H{r}} = -r, <r, x> = cos(t) <r, r> and <r, H{x}> = <r, cos(t) H{r} +
// sin(t) r> = sin(t) <r, r>: atan2 gives t. In the frequency domain, at
// positive frequencies rotate() multiplies by exp(j t), so theta is the
// argument of sum_k S(k) exp(2 pi j k d / N) over the band: the inner
// products weighted by power, as the sum is. Turning TARGET by -theta
// undoes it (tests/unit and tests/outside check the sign end to end).
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "measure_internal.h"

// Coherence held below 1, so that psi stays finite where the two are
// nearly identical (a copy, or a digital split).
#define COHERENCE_MAX 0.999
#define GOLDEN 0.6180339887498949

VnBins vn_bins_for(double lo_hz, double hi_hz, double rate_hz, uint32_t n_fft) {
  const double top = 0.49 * rate_hz; // below the band edge of every filter
  hi_hz = hi_hz < top ? hi_hz : top;
  double lo = ceil(lo_hz * n_fft / rate_hz);
  double hi = floor(hi_hz * n_fft / rate_hz);
  lo = lo < 1.0 ? 1.0 : lo;
  hi = hi > n_fft / 2.0 ? n_fft / 2.0 : hi;
  VnBins b = {(uint32_t)lo, (uint32_t)(hi < lo ? lo : hi)};
  return b;
}

static double coherence_at(const VnTotals *t, uint32_t k) {
  const double den = t->srr[k] * t->sxx[k];
  if (!(den > 0.0)) {
    return 0.0;
  }
  const double a = creal(t->srx[k]), b = cimag(t->srx[k]);
  const double g2 = (a * a + b * b) / den;
  return g2 < COHERENCE_MAX ? g2 : COHERENCE_MAX;
}

// A bin 90 dB below the band's strongest, in either file, holds nothing
// but rounding (a float file low-passed in a DAW is empty up top), and the
// coherence of rounding can be anything: such bins get no weight.
#define EMPTY_BIN 1e-9

typedef struct {
  double r, x;
} Floors;

static Floors floors_for(const VnTotals *t, VnBins b) {
  Floors f = {0, 0};
  for (uint32_t k = b.lo; k <= b.hi; ++k) {
    f.r = t->srr[k] > f.r ? t->srr[k] : f.r;
    f.x = t->sxx[k] > f.x ? t->sxx[k] : f.x;
  }
  f.r *= EMPTY_BIN;
  f.x *= EMPTY_BIN;
  return f;
}

// psi(k) S(k) = g2 / (1 - g2) exp(j arg S(k)).
static double complex weighted(const VnTotals *t, uint32_t k, Floors f) {
  const double mag = cabs(t->srx[k]);
  if (!(mag > 0.0) || t->srr[k] < f.r || t->sxx[k] < f.x) {
    return 0.0;
  }
  const double g2 = coherence_at(t, k);
  return t->srx[k] * (g2 / (1.0 - g2) / mag);
}

bool vn_fit_coarse(const VnTotals *t, VnBins b, int64_t max_lag, VnCoarse *c) {
  memset(c, 0, sizeof *c);
  const uint32_t n = t->n_fft;
  fftw_complex *spec = fftw_alloc_complex(n);
  fftw_complex *g = fftw_alloc_complex(n);
  double *env = calloc(n, sizeof *env);
  fftw_plan plan = spec && g ? fftw_plan_dft_1d((int)n, spec, g, FFTW_BACKWARD,
                                                FFTW_ESTIMATE)
                             : NULL;
  if (!plan || !env) {
    fftw_free(spec);
    fftw_free(g);
    free(env);
    return false;
  }
  memset(spec, 0, n * sizeof *spec);
  const Floors f = floors_for(t, b);
  for (uint32_t k = b.lo; k <= b.hi; ++k) {
    spec[k] = weighted(t, k, f);
  }
  // Only positive frequencies: g is the analytic correlation, and |g| its
  // envelope, whose peak does not move with polarity or a rotation.
  fftw_execute(plan);
  for (uint32_t i = 0; i < n; ++i) {
    env[i] = cabs(g[i]);
  }
#define ENV(lag) env[(lag) >= 0 ? (size_t)(lag) : (size_t)((int64_t)n + (lag))]
  const int64_t half = (int64_t)n / 2 - 1;
  max_lag = max_lag < half ? max_lag : half;
  int64_t best = 0, far = 0;
  for (int64_t lag = -half; lag <= half; ++lag) {
    const bool inside = lag >= -max_lag && lag <= max_lag;
    if (inside && ENV(lag) > ENV(best)) {
      best = lag;
    }
    if (!inside && ENV(lag) > ENV(far)) {
      far = lag;
    }
  }
  const double peak = ENV(best);
  int64_t lo = best, hi = best;
  while (lo > -max_lag && ENV(lo - 1) > 0.5 * peak) {
    --lo;
  }
  while (hi < max_lag && ENV(hi + 1) > 0.5 * peak) {
    ++hi;
  }
  const int64_t lobe = (hi - best > best - lo ? hi - best : best - lo) + 1;
  // The floor: the envelope's RMS over the search window away from the
  // main lobe; a window too narrow for that uses all of it.
  double sum = 0;
  uint64_t count = 0;
  for (int pass = 0; pass < 2 && count == 0; ++pass) {
    const int64_t keep_out = pass == 0 ? 3 * lobe + 2 : 0;
    for (int64_t lag = -max_lag; lag <= max_lag; ++lag) {
      if (llabs(lag - best) > keep_out) {
        sum += ENV(lag) * ENV(lag);
        ++count;
      }
    }
  }
  const double floor_rms = sqrt(sum / (double)(count ? count : 1));
  c->lag_frames = best;
  c->peak_db = floor_rms > 0 && peak > 0 ? 20.0 * log10(peak / floor_rms)
                                         : (peak > 0 ? 300.0 : 0.0);
  c->lobe_frames = (uint32_t)lobe;
  c->at_edge = llabs(best) >= max_lag - 1;
  // A peak beyond the range that beats the one inside by 1 dB: the offset
  // is probably out there.
  c->outside_lag = far != 0 && ENV(far) > 1.122 * peak ? far : 0;
#undef ENV
  fftw_destroy_plan(plan);
  fftw_free(spec);
  fftw_free(g);
  free(env);
  return true;
}

// sum_k w(k) exp(2 pi j k d / n) over the band, by a rotating phasor.
static double complex phased_sum(const double complex *w, VnBins b, uint32_t n,
                                 double d) {
  const double step = 2.0 * M_PI * d / n;
  const double complex z = cexp(I * step);
  double complex p = cexp(I * step * b.lo), sum = 0;
  for (uint32_t k = b.lo; k <= b.hi; ++k) {
    sum += w[k - b.lo] * p;
    p *= z;
  }
  return sum;
}

void vn_fit_fine(const VnTotals *t, VnBins b, double centre, double radius,
                 double *offset_frames, double *theta_deg) {
  const uint32_t m = b.hi - b.lo + 1;
  double complex *w = malloc(m * sizeof *w);
  double complex *s = malloc(m * sizeof *s);
  if (!w || !s) {
    free(w);
    free(s);
    *offset_frames = centre;
    *theta_deg = 0.0;
    return;
  }
  const Floors f = floors_for(t, b);
  for (uint32_t k = b.lo; k <= b.hi; ++k) {
    w[k - b.lo] = weighted(t, k, f);
    s[k - b.lo] = t->srx[k];
  }
  // A grid a quarter frame apart finds the main lobe (it is wider than a
  // frame below half the rate), golden-section search the top of it.
  double best = centre, best_j = -1.0;
  const int steps = (int)ceil(radius * 4.0);
  for (int i = -steps; i <= steps; ++i) {
    const double d = centre + i * 0.25;
    const double j = cabs(phased_sum(w, b, t->n_fft, d));
    if (j > best_j) {
      best_j = j;
      best = d;
    }
  }
  double lo = best - 0.25, hi = best + 0.25;
  double x1 = hi - GOLDEN * (hi - lo), x2 = lo + GOLDEN * (hi - lo);
  double j1 = cabs(phased_sum(w, b, t->n_fft, x1));
  double j2 = cabs(phased_sum(w, b, t->n_fft, x2));
  while (hi - lo > 1e-6) {
    if (j1 < j2) {
      lo = x1;
      x1 = x2;
      j1 = j2;
      x2 = lo + GOLDEN * (hi - lo);
      j2 = cabs(phased_sum(w, b, t->n_fft, x2));
    } else {
      hi = x2;
      x2 = x1;
      j2 = j1;
      x1 = hi - GOLDEN * (hi - lo);
      j1 = cabs(phased_sum(w, b, t->n_fft, x1));
    }
  }
  const double d = 0.5 * (lo + hi);
  *offset_frames = d;
  *theta_deg = carg(phased_sum(s, b, t->n_fft, d)) * 180.0 / M_PI;
  free(w);
  free(s);
}

double complex vn_allpass_response(const VnShapeFit *s, double w,
                                   double rate_hz) {
  // Held below 0.49 of the rate, as the All-pass plugin holds it.
  const double f =
      s->frequency_hz < 0.49 * rate_hz ? s->frequency_hz : 0.49 * rate_hz;
  const double complex z1 = cexp(-I * w);
  double complex h;
  if (s->order == 1) {
    // First order: (a + z^-1) / (1 + a z^-1), -90 degrees at f.
    const double g = tan(M_PI * f / rate_hz);
    const double a = (g - 1.0) / (g + 1.0);
    h = (a + z1) / (1.0 + a * z1);
  } else {
    // RBJ Audio EQ Cookbook all-pass: b = (1 - alpha, -2 cos w0, 1 + alpha),
    // a = (1 + alpha, -2 cos w0, 1 - alpha), alpha = sin(w0) / (2 q).
    const double w0 = 2.0 * M_PI * f / rate_hz;
    const double alpha = sin(w0) / (2.0 * s->q);
    const double c = -2.0 * cos(w0);
    const double complex z2 = z1 * z1;
    h = ((1.0 - alpha) + c * z1 + (1.0 + alpha) * z2) /
        ((1.0 + alpha) + c * z1 + (1.0 - alpha) * z2);
  }
  double complex out = 1.0;
  for (int i = 0; i < s->stages; ++i) {
    out *= h;
  }
  return out;
}

double complex vn_correction_at(const VnCorrection *c, uint32_t k,
                                uint32_t n_fft) {
  // Moving TARGET earlier by d multiplies it by exp(+2 pi j k d / N);
  // turning it by -theta by exp(-j theta).
  const double phase =
      2.0 * M_PI * k * c->offset_frames / n_fft - c->theta_deg * M_PI / 180.0;
  double complex r = cexp(I * phase);
  if (c->shape && c->shape->fitted) {
    r *= vn_allpass_response(c->shape, 2.0 * M_PI * k / n_fft, c->rate_hz);
  }
  return r;
}

void vn_fit_figures(const VnTotals *t, const VnCorrection *c, VnBins low,
                    VnSumFigures *f, double *low_power, double *full_power) {
  double low_sum = 0, full_sum = 0, cross = 0, rr = 0, xx = 0;
  const uint32_t top = t->n_fft / 2;
  for (uint32_t k = 1; k <= top; ++k) {
    const double complex s =
        c ? t->srx[k] * vn_correction_at(c, k, t->n_fft) : t->srx[k];
    // |R + C X|^2 = |R|^2 + |X|^2 + 2 Re(conj(R) C X), C of magnitude 1.
    const double p = t->srr[k] + t->sxx[k] + 2.0 * creal(s);
    full_sum += p;
    if (k >= low.lo && k <= low.hi) {
      low_sum += p;
    }
    cross += creal(s);
    rr += t->srr[k];
    xx += t->sxx[k];
  }
  const double segs = t->n_segments ? (double)t->n_segments : 1.0;
  *low_power = low_sum / segs;
  *full_power = full_sum / segs;
  f->correlation = rr > 0 && xx > 0 ? cross / sqrt(rr * xx) : 0.0;
  f->low_db = 0.0;
  f->full_db = 0.0;
}

static void set_db(VnSumFigures *f, double low, double full, double low0,
                   double full0) {
  f->low_db = low > 0 && low0 > 0 ? 10.0 * log10(low / low0) : -300.0;
  f->full_db = full > 0 && full0 > 0 ? 10.0 * log10(full / full0) : -300.0;
}

void vn_fit_all_figures(const VnTotals *t1, const VnTotals *t2, VnBins low,
                        double d, VnMeasureResult *r) {
  double low0, full0, lo, full;
  vn_fit_figures(t1, NULL, low, &r->as_recorded, &low0, &full0);
  const VnCorrection flip = {.theta_deg = r->invert ? 180.0 : 0.0,
                             .rate_hz = r->rate_hz};
  vn_fit_figures(t1, &flip, low, &r->polarity_only, &lo, &full);
  set_db(&r->polarity_only, lo, full, low0, full0);
  const VnCorrection moved = {.offset_frames = d, .rate_hz = r->rate_hz};
  vn_fit_figures(t2, &moved, low, &r->offset_only, &lo, &full);
  set_db(&r->offset_only, lo, full, low0, full0);
  const VnCorrection all = {
      .offset_frames = d, .theta_deg = r->theta_deg, .rate_hz = r->rate_hz};
  vn_fit_figures(t2, &all, low, &r->corrected, &lo, &full);
  set_db(&r->corrected, lo, full, low0, full0);
  if (r->shape.fitted) {
    const VnCorrection shaped = {.offset_frames = r->shape.offset_frames -
                                                  (double)r->coarse_frames,
                                 .theta_deg = r->shape.theta_deg,
                                 .shape = &r->shape,
                                 .rate_hz = r->rate_hz};
    vn_fit_figures(t2, &shaped, low, &r->shaped, &lo, &full);
    set_db(&r->shaped, lo, full, low0, full0);
  }
}
