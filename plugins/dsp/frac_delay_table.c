// SPDX-License-Identifier: GPL-3.0-or-later
#include "frac_delay_table.h"

#include "kaiser.h"

#include <math.h>
#include <stdlib.h>

double frac_delay_table_beta(void) {
  // Kaiser's length formula solved for the attenuation, then his beta
  // formula (the branch for more than 50 dB).
  const double transition_rad = 2.0 * M_PI * (1.0 - FRAC_DELAY_BAND_EDGE);
  const double attenuation_db =
      7.95 + 2.285 * (double)(FRAC_DELAY_TAPS - 1) * transition_rad;
  return kaiser_beta(attenuation_db);
}

// sin(pi u) / (pi u), exactly 0 at whole u other than 0, so that the rows of
// whole-sample fractions are exact unit impulses.
static double sinc(double u) {
  if (u == 0.0) {
    return 1.0;
  }
  if (u == nearbyint(u)) {
    return 0.0;
  }
  return sin(M_PI * u) / (M_PI * u);
}

// Row p: window position m holds h_j(mu) for j = H - m, mu = p / M, scaled
// to a DC gain of 1 (in double, before rounding to float).
static void design_row(float *row, uint32_t p, double beta) {
  const double mu = (double)p / FRAC_DELAY_PHASES;
  const double half = FRAC_DELAY_HALF_TAPS;
  double h[FRAC_DELAY_TAPS], sum = 0.0;
  for (uint32_t m = 0; m < FRAC_DELAY_TAPS; ++m) {
    const double u = (half - (double)m) - mu; // j - mu
    const double r = u / half;
    const double w = kaiser_window(r, beta);
    h[m] = w * sinc(u);
    sum += h[m];
  }
  for (uint32_t m = 0; m < FRAC_DELAY_TAPS; ++m) {
    row[m] = (float)(h[m] / sum);
  }
}

int frac_delay_table_setup(frac_delay_table_t *t) {
  t->beta = frac_delay_table_beta();
  // Cache-line aligned: every row starts on a 16-byte boundary (48 floats
  // are 192 bytes), which the FIR kernels' aligned loads rely on.
  t->rows = aligned_alloc(64, (FRAC_DELAY_PHASES + 1u) * FRAC_DELAY_TAPS *
                                  sizeof(float));
  if (!t->rows) {
    return -1;
  }
  for (uint32_t p = 0; p <= FRAC_DELAY_PHASES; ++p) {
    design_row(t->rows + (size_t)p * FRAC_DELAY_TAPS, p, t->beta);
  }
  return 0;
}

void frac_delay_table_free(frac_delay_table_t *t) {
  free(t->rows);
  t->rows = NULL;
}

void frac_delay_table_taps(const frac_delay_table_t *t, double mu,
                           float taps[FRAC_DELAY_TAPS]) {
  const double phase = mu * FRAC_DELAY_PHASES;
  uint32_t p = (uint32_t)phase;
  p = p < FRAC_DELAY_PHASES ? p : FRAC_DELAY_PHASES - 1u;
  const float f = (float)(phase - (double)p);
  const float *a = frac_delay_table_row(t, p), *b = a + FRAC_DELAY_TAPS;
  for (uint32_t m = 0; m < FRAC_DELAY_TAPS; ++m) {
    taps[m] = a[m] + f * (b[m] - a[m]);
  }
}
