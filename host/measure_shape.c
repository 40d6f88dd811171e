// SPDX-License-Identifier: GPL-3.0-or-later
// --shape: what phase difference a constant angle leaves, fitted with the
// All-pass plugin's stages (the frequency-centred all-pass), together with
// the offset and the angle.
//
// The fit is weighted least squares on the cross-spectrum's phase: with
// phi(k) the measured phase and a(k; p) the model's, it minimises
//   sum_k g2(k) |1 - exp(j (phi(k) + a(k; p) + t))|^2
//     = 2 sum_k g2(k) - 2 Re(exp(j t) sum_k g2(k) exp(j (phi + a))),
// g2 the magnitude-squared coherence after the coarse alignment (Carter,
// Knapp and Nuttall 1973) — the weight a bin deserves — in a form that
// needs no phase unwrapping. The angle t comes out in closed form, so the
// search is over frequency, q and the offset (Nelder and Mead's simplex,
// Computer Journal 7, 1965), from a grid of starting points, since the
// phase of an all-pass has as many local minima as it has stages.
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "measure_internal.h"

#define N_START_FREQUENCIES 8
#define MAX_ITERATIONS 160
// An all-pass is worth advising when it raises the phase agreement (the
// fit's |sum|, as a share of its largest possible value) by this much;
// among fits within TIE of the best, the one with the fewest stages wins.
#define MIN_GAIN 0.01
#define TIE 0.005
// ... and when what the sum gains (the cross term) grows by this share:
// an all-pass is a plugin more in the path and a phase response to hear,
// worth it for a real change, not for a tenth of a decibel.
#define MIN_SUM_GAIN 0.05

typedef struct {
  const double complex *w;  // g2(k) exp(j phi(k)), bins lo .. hi
  const double complex *s;  // the cross-spectrum itself, for the angle
  const double complex *z1; // exp(-j w) at each bin
  VnBins b;
  uint32_t n_fft;
  double rate_hz;
  double total; // sum of |w|: the agreement's ceiling
  double lo_hz, hi_hz;
  double d_lo, d_hi; // the offset's limits, frames from the coarse shift
  int stages, order;
} Problem;

// The model's response over the band for one all-pass and offset, into
// the sums: sum_k w(k) m(k) and (power) sum_k s(k) m(k). Written out with
// a table of exp(-j w) and a rotating phasor for the offset rather than
// through vn_correction_at(), which would take a sine, a cosine and a
// tangent per bin: this runs some hundred thousand times.
static void model_sums(const Problem *pr, double f, double q, double d,
                       double complex *sum, double complex *power) {
  const VnShapeFit s = {.frequency_hz = f, .q = q, .order = pr->order};
  // The first-order and the RBJ second-order all-pass, as in
  // vn_allpass_response(): h = num / den, |num| = |den|.
  double c0, c1, c2;
  const double fh = f < 0.49 * pr->rate_hz ? f : 0.49 * pr->rate_hz;
  if (s.order == 1) {
    const double g = tan(M_PI * fh / pr->rate_hz);
    c0 = (g - 1.0) / (g + 1.0); // num = c0 + z1, den = 1 + c0 z1
    c1 = c2 = 0.0;
  } else {
    const double w0 = 2.0 * M_PI * fh / pr->rate_hz;
    const double alpha = sin(w0) / (2.0 * q);
    c0 = 1.0 - alpha; // num = c0 + c1 z1 + c2 z2, den = c2 + c1 z1 + c0 z2
    c1 = -2.0 * cos(w0);
    c2 = 1.0 + alpha;
  }
  const double step = 2.0 * M_PI * d / pr->n_fft;
  const double complex z = cexp(I * step);
  double complex p = cexp(I * step * pr->b.lo), acc = 0, pow_acc = 0;
  for (uint32_t k = pr->b.lo; k <= pr->b.hi; ++k) {
    const size_t i = k - pr->b.lo;
    const double complex z1 = pr->z1[i];
    double complex num, den;
    if (s.order == 1) {
      num = c0 + z1;
      den = 1.0 + c0 * z1;
    } else {
      const double complex z2 = z1 * z1;
      num = c0 + c1 * z1 + c2 * z2;
      den = c2 + c1 * z1 + c0 * z2;
    }
    const double complex h1 =
        num * conj(den) / (creal(den) * creal(den) + cimag(den) * cimag(den));
    double complex m = p;
    for (int j = 0; j < pr->stages; ++j) {
      m *= h1;
    }
    acc += pr->w[i] * m;
    pow_acc += pr->s[i] * m;
    p *= z;
  }
  *sum = acc;
  *power = pow_acc;
}

// The agreement for p = (log f, d) or (log f, log q, d); -1 outside.
static double agreement(const Problem *pr, const double *p, double *theta_deg) {
  const double f = exp(p[0]);
  const double q = pr->order == 2 ? exp(p[1]) : 0.707;
  const double d = pr->order == 2 ? p[2] : p[1];
  if (f < pr->lo_hz || f > pr->hi_hz || q < 0.1 || q > 10.0 || d < pr->d_lo ||
      d > pr->d_hi) {
    return -1.0;
  }
  double complex sum, power;
  model_sums(pr, f, q, d, &sum, &power);
  if (theta_deg) {
    *theta_deg = carg(power) * 180.0 / M_PI;
  }
  return cabs(sum) / pr->total;
}

// Nelder-Mead on dims parameters from start with steps; p gets the best.
static double simplex(const Problem *pr, int dims, const double *start,
                      const double *steps, double *best) {
  double x[4][3], fx[4];
  for (int i = 0; i <= dims; ++i) {
    memcpy(x[i], start, sizeof x[i]);
    if (i > 0) {
      x[i][i - 1] += steps[i - 1];
    }
    fx[i] = agreement(pr, x[i], NULL);
  }
  for (int it = 0; it < MAX_ITERATIONS; ++it) {
    int hi = 0, lo = 0;
    for (int i = 1; i <= dims; ++i) {
      hi = fx[i] < fx[hi] ? i : hi; // the worst (we maximise)
      lo = fx[i] > fx[lo] ? i : lo;
    }
    if (fx[lo] - fx[hi] < 1e-9) {
      break;
    }
    double centre[3] = {0, 0, 0}, trial[3], more[3];
    for (int i = 0; i <= dims; ++i) {
      for (int j = 0; j < dims && i != hi; ++j) {
        centre[j] += x[i][j] / dims;
      }
    }
    for (int j = 0; j < dims; ++j) {
      trial[j] = centre[j] + (centre[j] - x[hi][j]);
      more[j] = centre[j] + 2.0 * (centre[j] - x[hi][j]);
    }
    const double ft = agreement(pr, trial, NULL);
    if (ft > fx[lo]) {
      const double fm = agreement(pr, more, NULL);
      memcpy(x[hi], fm > ft ? more : trial, sizeof x[hi]);
      fx[hi] = fm > ft ? fm : ft;
      continue;
    }
    if (ft > fx[hi]) {
      memcpy(x[hi], trial, sizeof x[hi]);
      fx[hi] = ft;
      continue;
    }
    for (int j = 0; j < dims; ++j) {
      trial[j] = centre[j] + 0.5 * (x[hi][j] - centre[j]);
    }
    const double fc = agreement(pr, trial, NULL);
    if (fc > fx[hi]) {
      memcpy(x[hi], trial, sizeof x[hi]);
      fx[hi] = fc;
      continue;
    }
    for (int i = 0; i <= dims; ++i) { // shrink toward the best
      for (int j = 0; j < dims && i != lo; ++j) {
        x[i][j] = x[lo][j] + 0.5 * (x[i][j] - x[lo][j]);
      }
      fx[i] = i == lo ? fx[i] : agreement(pr, x[i], NULL);
    }
  }
  int lo = 0;
  for (int i = 1; i <= dims; ++i) {
    lo = fx[i] > fx[lo] ? i : lo;
  }
  memcpy(best, x[lo], sizeof x[lo]);
  return fx[lo];
}

// One (stages, order): the best of the starting grid.
static double fit_one(Problem *pr, double d0, double *best) {
  const int dims = pr->order == 2 ? 3 : 2;
  double top = -1.0;
  const double span = log(pr->hi_hz / pr->lo_hz);
  for (int i = 0; i < N_START_FREQUENCIES; ++i) {
    const double log_f =
        log(pr->lo_hz) + span * (i + 0.5) / N_START_FREQUENCIES;
    for (int qi = 0; qi < (pr->order == 2 ? 2 : 1); ++qi) {
      // The all-pass delays TARGET by about its group delay, which the
      // offset must then take back: try a few offsets first.
      double start[3] = {log_f, qi ? log(2.0) : log(0.5), d0};
      const double f = exp(log_f);
      const double lag_frames = pr->stages * pr->rate_hz / (M_PI * f);
      double best_d = d0, best_a = -1.0;
      for (int j = 0; j <= 16; ++j) {
        start[dims - 1] = d0 + lag_frames * j / 8.0;
        const double a = agreement(pr, start, NULL);
        if (a > best_a) {
          best_a = a;
          best_d = start[dims - 1];
        }
      }
      start[dims - 1] = best_d;
      const double steps[3] = {0.3, pr->order == 2 ? 0.5 : 1.0, 1.0};
      double p[3];
      const double a = simplex(pr, dims, start, steps, p);
      if (a > top) {
        top = a;
        memcpy(best, p, sizeof p);
      }
    }
  }
  return top;
}

void vn_fit_shape(const VnTotals *t, VnBins b, double rate_hz, int64_t max_lag,
                  double offset_frames, VnShapeFit *shape) {
  memset(shape, 0, sizeof *shape);
  const uint32_t m = b.hi - b.lo + 1;
  double complex *w = malloc(m * sizeof *w), *s = malloc(m * sizeof *s);
  double complex *z1 = malloc(m * sizeof *z1);
  Problem pr = {
      .w = w, .s = s, .z1 = z1, .b = b, .n_fft = t->n_fft, .rate_hz = rate_hz};
  if (!w || !s || !z1) {
    goto done;
  }
  const double chance = t->n_segments > 1 ? 1.0 / (double)t->n_segments : 0.0;
  for (uint32_t k = b.lo; k <= b.hi; ++k) {
    const double mag = cabs(t->srx[k]);
    const double den = t->srr[k] * t->sxx[k];
    // Unrelated signals give g2 about 1 / K from K segments: what is left
    // above that is the bin's real weight, so that a wide band of noise
    // cannot outvote the few bins the pair shares.
    double g2 = den > 0 ? mag * mag / den : 0.0;
    g2 = (g2 - chance) / (1.0 - chance);
    g2 = g2 > 0 ? g2 : 0.0;
    w[k - b.lo] = mag > 0 ? t->srx[k] * (g2 / mag) : 0.0;
    s[k - b.lo] = t->srx[k];
    z1[k - b.lo] = cexp(-2.0 * M_PI * I * k / t->n_fft);
    pr.total += g2;
  }
  pr.lo_hz = b.lo * rate_hz / t->n_fft;
  pr.lo_hz = pr.lo_hz > 20.0 ? pr.lo_hz : 20.0;
  pr.hi_hz = b.hi * rate_hz / t->n_fft;
  pr.hi_hz = pr.hi_hz < 20000.0 ? pr.hi_hz : 20000.0;
  pr.d_lo = offset_frames - (double)max_lag;
  pr.d_hi = offset_frames + (double)max_lag;
  if (!(pr.total > 0) || pr.hi_hz <= pr.lo_hz) {
    goto done;
  }
  // The constant-angle fit, which an all-pass must beat: in agreement,
  // and in what the sum gains (its cross term, |sum_k S(k) m(k)|), so that
  // a fit to the phase of bins with little power is not advised.
  double complex base_sum = 0, base_power = 0;
  for (uint32_t k = b.lo; k <= b.hi; ++k) {
    const double complex m0 =
        cexp(2.0 * M_PI * I * k * offset_frames / t->n_fft);
    base_sum += w[k - b.lo] * m0;
    base_power += s[k - b.lo] * m0;
  }
  const double base = cabs(base_sum) / pr.total;
  double scores[2][5] = {{0}}, params[2][5][3];
  double top = base;
  for (int order = 1; order <= 2; ++order) {
    for (int stages = 1; stages <= 4; ++stages) {
      pr.order = order;
      pr.stages = stages;
      scores[order - 1][stages] =
          fit_one(&pr, offset_frames, params[order - 1][stages]);
      top = scores[order - 1][stages] > top ? scores[order - 1][stages] : top;
    }
  }
  for (int stages = 1; stages <= 4 && top >= base + MIN_GAIN; ++stages) {
    for (int order = 1; order <= 2; ++order) {
      if (scores[order - 1][stages] < top - TIE) {
        continue;
      }
      const double *p = params[order - 1][stages];
      pr.order = order;
      pr.stages = stages;
      double complex sum, power;
      const double q = order == 2 ? exp(p[1]) : 0.707;
      const double d = order == 2 ? p[2] : p[1];
      model_sums(&pr, exp(p[0]), q, d, &sum, &power);
      if (cabs(power) < (1.0 + MIN_SUM_GAIN) * cabs(base_power)) {
        goto done; // agrees better, sums no better: not worth a plugin
      }
      shape->fitted = true;
      shape->order = order;
      shape->stages = stages;
      shape->frequency_hz = exp(p[0]);
      shape->q = q;
      shape->offset_frames = d;
      shape->theta_deg = carg(power) * 180.0 / M_PI;
      goto done;
    }
  }
done:
  free(w);
  free(s);
  free(z1);
}
