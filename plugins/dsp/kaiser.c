// SPDX-License-Identifier: GPL-3.0-or-later
#include "kaiser.h"

#include <math.h>

// By its power series sum ((x/2)^k / k!)^2; for the betas used here (4.5 to
// 7) it converges to double precision in about 30 terms.
double kaiser_bessel_i0(double x) {
  const double q = 0.25 * x * x;
  double term = 1.0, sum = 1.0;
  for (int k = 1; k < 200 && term > 1e-17 * sum; ++k) {
    term *= q / ((double)k * (double)k);
    sum += term;
  }
  return sum;
}

double kaiser_beta(double attenuation_db) {
  const double a = attenuation_db;
  if (a > 50.0) {
    return 0.1102 * (a - 8.7);
  }
  if (a >= 21.0) {
    return 0.5842 * pow(a - 21.0, 0.4) + 0.07886 * (a - 21.0);
  }
  return 0.0;
}

double kaiser_window(double r, double beta) {
  if (r < -1.0 || r > 1.0) {
    return 0.0;
  }
  const double norm = 1.0 / kaiser_bessel_i0(beta);
  return kaiser_bessel_i0(beta * sqrt(fmax(0.0, 1.0 - r * r))) * norm;
}
