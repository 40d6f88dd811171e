// SPDX-License-Identifier: GPL-3.0-or-later
#include "hilbert.h"

#include <math.h>

// Modified Bessel function of the first kind, order 0, by its power series
// sum ((x/2)^k / k!)^2; for the betas used here (about 4.5) it converges to
// double precision in under 30 terms.
static double bessel_i0(double x) {
  const double q = 0.25 * x * x;
  double term = 1.0, sum = 1.0;
  for (int k = 1; k < 200 && term > 1e-17 * sum; ++k) {
    term *= q / ((double)k * (double)k);
    sum += term;
  }
  return sum;
}

// Kaiser's empirical formula for beta from the attenuation in dB.
double hilbert_kaiser_beta(double attenuation_db) {
  const double a = attenuation_db;
  if (a > 50.0) {
    return 0.1102 * (a - 8.7);
  }
  if (a >= 21.0) {
    return 0.5842 * pow(a - 21.0, 0.4) + 0.07886 * (a - 21.0);
  }
  return 0.0;
}

// Transition width in rad/sample: from -HILBERT_EDGE_HZ to +HILBERT_EDGE_HZ.
static double transition_rad(double rate_hz) {
  return 2.0 * M_PI * (2.0 * HILBERT_EDGE_HZ) / rate_hz;
}

// Kaiser's length formula: order M = N - 1 = (A - 7.95) / (2.285 dw).
double hilbert_attenuation_db(uint32_t n_taps, double rate_hz) {
  return 7.95 + 2.285 * (double)(n_taps - 1) * transition_rad(rate_hz);
}

uint32_t hilbert_min_taps(double rate_hz) {
  const double order =
      (HILBERT_ATTENUATION_DB - 7.95) / (2.285 * transition_rad(rate_hz));
  uint32_t half = (uint32_t)ceil(0.5 * order); // D = (N - 1) / 2
  half |= 1u;                                  // odd D: the end taps count
  return 2u * half + 1u;
}

void hilbert_design(float *taps, uint32_t n_taps, double rate_hz) {
  const int32_t d = (int32_t)(n_taps / 2);
  const double beta =
      hilbert_kaiser_beta(hilbert_attenuation_db(n_taps, rate_hz));
  const double norm = 1.0 / bessel_i0(beta);
  for (int32_t n = -d; n <= d; ++n) {
    double h = 0.0;
    if (n % 2 != 0) {
      const double r = (double)n / (double)d;
      const double w = bessel_i0(beta * sqrt(fmax(0.0, 1.0 - r * r))) * norm;
      h = 2.0 / (M_PI * (double)n) * w;
    }
    taps[n + d] = (float)h;
  }
}
