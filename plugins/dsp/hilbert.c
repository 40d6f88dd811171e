// SPDX-License-Identifier: GPL-3.0-or-later
#include "hilbert.h"

#include "kaiser.h"

#include <math.h>

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
  const double beta = kaiser_beta(hilbert_attenuation_db(n_taps, rate_hz));
  for (int32_t n = -d; n <= d; ++n) {
    double h = 0.0;
    if (n % 2 != 0) {
      const double r = (double)n / (double)d;
      const double w = kaiser_window(r, beta);
      h = 2.0 / (M_PI * (double)n) * w;
    }
    taps[n + d] = (float)h;
  }
}
