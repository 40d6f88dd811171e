// SPDX-License-Identifier: GPL-3.0-or-later
// The exact half of allpass_coef.h: the coefficients a settled all-pass runs
// on, from libm. Computed once per change of a target, never per sample, so
// it need not be inline, and libm's cost does not matter here.
#include "allpass_coef.h"

#include <math.h>

void allpass_coefs_exact(allpass_coefs_t *co, double *s, double *c, double *k,
                         double f_hz, double rate_hz, double q) {
  const double half_w0 = M_PI * f_hz / rate_hz;
  *s = sin(half_w0);
  *c = cos(half_w0);
  *k = 1.0 / q;
  allpass_coefs_from(co, *s, *c, *k, true, true);
}
